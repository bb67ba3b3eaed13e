"""The demo runs end to end on the invented scenario and leaves a consistent store."""

from __future__ import annotations

from tests.clihelp import run


def test_demo_tour_runs_every_step(tmp_path):
    db = tmp_path / "demo.db"
    r = run(None, "demo", "--db", str(db))
    assert r.code == 0, r.err
    for step in ("$ stock import", "$ stock find", "$ stock fit", "$ stock check",
                 "$ stock reserve", "$ stock pick", "$ stock build", "$ stock verify"):
        assert step in r.err
    assert "exit code" not in r.err
    assert "ok: every balance equals its ledger" in r.err
    # the audio kit was built: its parts left the drawers through the ledger
    built = run(db, "builds", "--json").json()
    assert [b["status"] for b in built] == ["built"]
    # the transmitter kit's safety caution is shown
    assert "licence" in r.out and "harmonic" in r.out
    # running it again starts from a fresh store
    assert run(None, "demo", "--db", str(db)).code == 0
    assert len(run(db, "builds", "--json").json()) == 1
