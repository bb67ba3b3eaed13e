"""Fill docs/user-guide.md from a template by running every example in a scratch store.

Run from the project root, in the project's virtualenv:
    python tools/userguide/gen.py tools/userguide/guide.tmpl.md docs/user-guide.md

Template lines (inside fenced blocks):
  @@ CMD  ## keep=SPEC rc      run CMD, show "$ CMD" and its output (trimmed by SPEC)
  @@! CMD                      run CMD, show nothing (setup)
  @@session NAME [ENV=VAL ...] start a new scratch folder (cwd) with these env vars
SPEC: comma list of N, N-M, -N (from the end), /regex/ ; gaps become "…".
"""
import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
tmpl, out = Path(sys.argv[1]), Path(sys.argv[2])
venv_bin = str(REPO / ".venv/bin")
cwd = None
env = None

def new_session(args):
    global cwd, env
    cwd = Path(tempfile.mkdtemp(prefix="guide-"))
    (cwd / "seeds_demo").symlink_to(REPO / "seeds_demo")
    env = dict(os.environ, PATH=venv_bin + ":" + os.environ["PATH"], COLUMNS="100",
               STOCK_HOME=str(cwd / "home"), NO_COLOR="1", TERM="dumb")
    env.pop("STOCK_DB", None)
    env.pop("STOCK_CONFIG", None)
    for a in args:
        k, v = a.split("=", 1)
        env[k] = v.replace("{cwd}", str(cwd))

def run(cmd):
    p = subprocess.run(["bash", "-c", cmd + " 2>&1"], cwd=cwd, env=env, capture_output=True,
                       text=True)
    return [ln.rstrip() for ln in p.stdout.rstrip("\n").splitlines()], p.returncode

def keep(lines, spec):
    n = len(lines)
    sel = set()
    for item in spec.split(","):
        item = item.strip()
        if item.startswith("/") and item.endswith("/"):
            rx = re.compile(item[1:-1])
            sel |= {i for i, ln in enumerate(lines) if rx.search(ln)}
        elif re.fullmatch(r"-\d+", item):
            sel |= set(range(max(0, n - int(item[1:])), n))
        elif "-" in item:
            a, b = item.split("-")
            sel |= set(range(int(a) - 1, min(n, int(b))))
        else:
            sel.add(int(item) - 1)
    res, last = [], -1
    for i in sorted(s for s in sel if 0 <= s < n):
        if i != last + 1:
            res.append("…")
        res.append(lines[i])
        last = i
    if last != n - 1:
        res.append("…")
    return res

new_session([])
result = []
problems = []
for line in tmpl.read_text().splitlines():
    m = re.match(r"^(\s*)@@session\s*(.*)$", line)
    if m:
        new_session(m.group(2).split()[1:] if m.group(2) else [])
        continue
    m = re.match(r"^(\s*)@@!\s+(.*)$", line)
    if m:
        _, rc = run(m.group(2))
        if rc:
            problems.append(f"hidden command failed ({rc}): {m.group(2)}")
        continue
    m = re.match(r"^(\s*)@@\s+(.*?)(?:\s+##\s*(.*))?$", line)
    if m:
        ind, cmd, opts = m.group(1), m.group(2), m.group(3) or ""
        lines, rc = run(cmd)
        o = {k: (v[1:-1] if v[:1] == '"' else v)
             for k, v in re.findall(r'(\w+)(?:=("[^"]*"|\S+))?', opts)}
        if "expect" in o and o["expect"] != "any" and int(o["expect"]) != rc:
            problems.append(f"exit {rc} (expected {o['expect']}): {cmd}\n" + "\n".join(lines[:5]))
        elif "expect" not in o and rc != 0:
            problems.append(f"exit {rc}: {cmd}\n" + "\n".join(lines[:5]))
        if "from" in o:
            rx = re.compile(o["from"][1:-1])
            first = next(i for i, ln in enumerate(lines) if rx.search(ln))
            lines = (["…"] if first else []) + lines[first:]
        if "drop" in o:
            rx = re.compile(o["drop"][1:-1])
            lines = [ln for ln in lines if not rx.search(ln)]
        if "keep" in o:
            lines = keep(lines, o["keep"])
        shown = o.get("show", cmd)
        result.append(ind + "$ " + shown)
        result += [ind + ln if ln else ln for ln in lines]
        if "rc" in o:
            result += [ind + "$ echo $?", ind + str(rc)]
        continue
    result.append(line)
out.write_text("\n".join(result) + "\n")
print("\n".join(problems) or "all commands ran as expected")
