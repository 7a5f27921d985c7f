"""Output folders: checked before the work, written as one set (stowflow.report.folder).

Internal checks of the file handling (no outside source): after any write - finished,
failed (a full disk) or interrupted (Ctrl+C) - the folder holds either the previous complete
set or the new complete set, no temporary file or folder is left, and nothing planted in the
folder is followed.
"""

from __future__ import annotations

import errno
import os
import re
import signal
from pathlib import Path

import pytest
from stowflow.errors import OutputError
from stowflow.report import folder
from stowflow.report.folder import check_out_dir, write_set

NAMES = ("report.html", "design.json", "schedule.csv", "spec.csv")


def _texts(tag: str) -> dict[str, str]:
    return {name: f"{tag} {name}\n" for name in NAMES}


def _state(out: Path) -> dict[str, tuple[int, str]]:
    """File name → (inode, content) of every entry of ``out``."""
    return {p.name: (p.stat().st_ino, p.read_text()) for p in sorted(out.iterdir())}


def _no_leftovers(parent: Path) -> None:
    left = [p.name for p in parent.iterdir() if ".tmp-" in p.name or ".old-" in p.name]
    assert left == []
    assert not list(parent.rglob("*.part"))


def _one_set(out: Path) -> str:
    """The tag of the complete set ``out`` holds (every file from the same write)."""
    tags = {p.read_text().split(" ", 1)[0] for p in out.iterdir() if p.name in NAMES}
    assert {p.name for p in out.iterdir()} >= set(NAMES)
    assert len(tags) == 1, f"a mix of sets: {tags}"
    return tags.pop()


def test_a_new_folder_gets_the_set(tmp_path):
    out = tmp_path / "a" / "b" / "study"
    paths = write_set(out, _texts("new"))
    assert set(paths) == set(NAMES) and all(p.parent == out for p in paths.values())
    assert _one_set(out) == "new"
    _no_leftovers(out.parent)


def test_a_previous_set_is_replaced_as_a_whole(tmp_path):
    out = tmp_path / "study"
    write_set(out, _texts("old"))
    mode = 0o750
    os.chmod(out, mode)
    before = _state(out)
    write_set(out, _texts("new"))
    after = _state(out)
    assert _one_set(out) == "new"
    # every file is a new one: no file of the old set is left in the folder
    assert not {before[n][0] for n in NAMES} & {after[n][0] for n in NAMES}
    assert (out.stat().st_mode & 0o777) == mode  # the folder keeps its permissions
    _no_leftovers(tmp_path)


def test_the_other_commands_outputs_are_kept(tmp_path):
    out = tmp_path / "study"
    write_set(out, _texts("design"))
    write_set(out, {"simulation.csv": "sim\n", "verification.json": "{}\n"})
    assert _one_set(out) == "design"
    write_set(out, _texts("again"))
    assert (out / "simulation.csv").read_text() == "sim\n"
    assert _one_set(out) == "again"
    _no_leftovers(tmp_path)


def test_a_full_disk_leaves_the_previous_set(tmp_path, monkeypatch):
    out = tmp_path / "study"
    write_set(out, _texts("old"))
    before = _state(out)
    real_open = open
    calls = []

    def full_disk(path, *args, **kwargs):
        calls.append(path)
        if len(calls) == 3:
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), str(path))
        return real_open(path, *args, **kwargs)

    monkeypatch.setattr(folder, "open", full_disk, raising=False)
    with pytest.raises(OutputError, match=r"No space left on device.*previous files.*unchanged"):
        write_set(out, _texts("new"))
    assert _state(out) == before
    _no_leftovers(tmp_path)


def test_ctrl_c_while_writing_finishes_the_set_then_stops(tmp_path, monkeypatch):
    # The signal arrives in the middle of the writing: it is held back until the new set
    # is in place, then acted on.
    out = tmp_path / "study"
    write_set(out, _texts("old"))
    real_open = open
    calls = []

    def interrupted(path, *args, **kwargs):
        calls.append(path)
        if len(calls) == 2:
            signal.raise_signal(signal.SIGINT)
        return real_open(path, *args, **kwargs)

    monkeypatch.setattr(folder, "open", interrupted, raising=False)
    with pytest.raises(KeyboardInterrupt):
        write_set(out, _texts("new"))
    assert _one_set(out) == "new"
    assert signal.getsignal(signal.SIGINT) is signal.default_int_handler
    _no_leftovers(tmp_path)


def test_ctrl_c_before_the_commit_leaves_the_previous_set(tmp_path, monkeypatch):
    out = tmp_path / "study"
    write_set(out, _texts("old"))
    before = _state(out)

    def interrupted(tmp, target, names):
        raise KeyboardInterrupt

    monkeypatch.setattr(folder, "_commit", interrupted)
    with pytest.raises(KeyboardInterrupt):
        write_set(out, _texts("new"))
    assert _state(out) == before
    _no_leftovers(tmp_path)


def test_without_an_atomic_exchange_two_renames_do(tmp_path, monkeypatch):
    monkeypatch.setattr(folder, "_exchange", lambda a, b: False)
    out = tmp_path / "study"
    write_set(out, _texts("old"))
    write_set(out, _texts("new"))
    assert _one_set(out) == "new"
    _no_leftovers(tmp_path)


def test_a_planted_symlink_is_not_followed(tmp_path):
    # An old version wrote design.json.part first; a link planted under that name (or under
    # an output's own name) must not make the write land elsewhere.
    victim = tmp_path / "victim.txt"
    victim.write_text("keep me\n")
    out = tmp_path / "study"
    write_set(out, _texts("old"))
    (out / "design.json.part").symlink_to(victim)
    (out / "spec.csv").unlink()
    (out / "spec.csv").symlink_to(victim)
    write_set(out, _texts("new"))
    assert victim.read_text() == "keep me\n"
    assert _one_set(out) == "new"
    assert not (out / "spec.csv").is_symlink() and not (out / "design.json.part").exists()
    _no_leftovers(tmp_path)


@pytest.mark.parametrize(
    ("make", "pattern"),
    [
        (lambda t: (t / "f").write_text("x") and t / "f", r"is a file; expected a folder"),
        (
            lambda t: (t / "f").write_text("x") and t / "f" / "sub",
            r"f is a file, so no folder can be made under it",
        ),
        (lambda t: t / ("n" * 300), r"has 300 bytes; expected at most 242"),
        (lambda t: t / ("n" * 250), r"has 250 bytes; expected at most 242"),
        (lambda t: Path("/proc/stowflow-test"), r"cannot write in /proc"),
        (lambda t: Path("/"), r"is the root folder"),
    ],
    ids=["file", "under-a-file", "name-300", "name-250", "unwritable", "root"],
)
def test_unusable_folders_are_refused_before_any_work(tmp_path, make, pattern):
    with pytest.raises(OutputError, match=pattern) as info:
        check_out_dir(make(tmp_path))
    assert "\n" not in str(info.value) and str(info.value).startswith("--out ")


def test_a_folder_with_foreign_files_is_refused(tmp_path):
    out = tmp_path / "study"
    out.mkdir()
    (out / "notes.txt").write_text("mine\n")
    with pytest.raises(OutputError, match=r"holds 'notes\.txt', which stowflow did not write"):
        check_out_dir(out)
    (out / "notes.txt").unlink()
    (out / "sub").mkdir()
    with pytest.raises(OutputError, match=r"holds 'sub'"):
        write_set(out, _texts("new"))
    assert [p.name for p in out.iterdir()] == ["sub"]


def test_the_current_folder_is_refused(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    for path in (".", tmp_path, tmp_path.parent):
        with pytest.raises(OutputError, match=r"is the current folder or holds it"):
            check_out_dir(path)


def test_design_checks_out_before_it_runs(run_cli, tmp_path, repo_root, monkeypatch):
    # Regression: the refusal came after the whole design had run, and the result was lost.
    import stowflow.pipeline

    def never(*args, **kwargs):
        raise AssertionError("the design ran before --out was checked")

    monkeypatch.setattr(stowflow.pipeline, "run", never)
    (tmp_path / "afile").write_text("x")
    cycle = repo_root / "duty_cycles" / "forming_press.csv"
    for out, pattern in [
        (tmp_path / "afile", r"is a file"),
        (tmp_path / "afile" / "sub", r"is a file, so no folder"),
        (tmp_path / ("n" * 300), r"expected at most 242"),
        ("/proc/stowflow-test", r"cannot write in /proc"),
    ]:
        code, stdout, stderr = run_cli("design", cycle, "--out", out)
        assert code == 2 and stdout == ""
        assert stderr.startswith("stowflow: error: --out ") and stderr.count("\n") == 1
        assert re.search(pattern, stderr), stderr
