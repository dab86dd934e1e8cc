"""Atomic writing of the output folder, in one process or two."""

import pytest

import wallrun
from wallrun.outputs import write

EXPECTED = {"bar_schedule.csv", "cost.csv", "design.json", "elevation.dxf", "elevation.png",
            "joints.csv", "panels.csv", "quantities.csv", "report.html", "schedule.xlsx",
            "sections.csv", "sections.dxf", "sections.pdf", "sheets.pdf", "profiles.csv",
            "model.ifc"}


@pytest.fixture(scope="module")
def result():
    return wallrun.design(wallrun.load_site("sites/platform-edge"))


def test_two_processes_write_the_same_tables(result, tmp_path, monkeypatch):
    one = write.write_outputs(result, tmp_path / "one")
    monkeypatch.setattr(write, "PARALLEL_FROM_TYPES", 0)
    two = write.write_outputs(result, tmp_path / "two")
    assert set(one) == set(two) == EXPECTED
    for name in ("panels.csv", "joints.csv", "design.json", "bar_schedule.csv", "cost.csv"):
        assert (tmp_path / "one" / name).read_bytes() == (tmp_path / "two" / name).read_bytes()


def test_a_failing_child_writer_fails_the_write_and_leaves_nothing(result, tmp_path,
                                                                  monkeypatch):
    monkeypatch.setattr(write, "PARALLEL_FROM_TYPES", 0)

    def broken(result, folder):
        raise OSError("disk full (simulated)")

    monkeypatch.setattr(write, "_write_sections_and_preview", broken)
    with pytest.raises(RuntimeError, match="disk full"):
        write.write_outputs(result, tmp_path / "out")
    assert list(tmp_path.iterdir()) == []


def test_previous_output_survives_a_failed_write(result, tmp_path, monkeypatch):
    write.write_outputs(result, tmp_path / "out")
    before = (tmp_path / "out" / "panels.csv").read_bytes()

    def broken(result, folder):
        raise ValueError("renderer fault (simulated)")

    monkeypatch.setattr(write, "_write_the_rest", broken)
    with pytest.raises(ValueError):
        write.write_outputs(result, tmp_path / "out")
    assert (tmp_path / "out" / "panels.csv").read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]
