"""Documents are written whole, in place of the old ones, and readable like any file the user makes."""

import os
import stat

import pytest

from bankbuild.errors import OptionError
from bankbuild.files import LOCK_NAME, FileSet, write_atomic
from bankbuild.reports.writer import write_rendered


def test_written_file_takes_the_umask_mode_not_a_private_one(tmp_path):
    old = os.umask(0o022)
    try:
        path = write_atomic(tmp_path / "bill-of-materials.csv", b"item,qty\n")
        [doc] = write_rendered([("rerate.txt", b"text")], tmp_path / "out")
    finally:
        os.umask(old)
    assert stat.S_IMODE(path.stat().st_mode) == 0o644
    assert stat.S_IMODE(doc.stat().st_mode) == 0o644
    assert path.read_bytes() == b"item,qty\n"


def test_rewrite_replaces_and_leaves_no_temporary_file(tmp_path):
    target = tmp_path / "results.json"
    write_atomic(target, b"old")
    write_atomic(target, b"new")
    assert target.read_bytes() == b"new"
    assert [p.name for p in tmp_path.iterdir()] == ["results.json"]


def test_a_set_replaces_the_previous_set_and_drops_what_it_no_longer_holds(tmp_path):
    out = tmp_path / "out"
    (tmp_path / "out").mkdir()
    (out / "notes.txt").write_text("the user's own file")
    family = ("a.txt", "b.txt")
    write_rendered([("a.txt", b"1"), ("b.txt", b"1")], out, family)
    write_rendered([("a.txt", b"2")], out, family)
    write_rendered([("c.txt", b"another kind of set")], out, ("c.txt",))
    assert sorted(p.name for p in out.iterdir()) == ["a.txt", "c.txt", "notes.txt"]
    assert (out / "a.txt").read_bytes() == b"2"


def test_a_failure_before_the_commit_changes_nothing_and_leaves_no_folder(tmp_path):
    out = tmp_path / "new" / "out"
    with pytest.raises(RuntimeError), FileSet(out, "out_dir") as files:
        files.add("a.txt", b"1")
        raise RuntimeError("rendering failed")
    assert not (tmp_path / "new").exists()
    out.mkdir(parents=True)
    write_rendered([("a.txt", b"old")], out)
    with pytest.raises(RuntimeError), FileSet(out, "out_dir") as files:
        files.add("a.txt", b"new")
        raise RuntimeError("rendering failed")
    assert (out / "a.txt").read_bytes() == b"old"
    assert sorted(p.name for p in out.iterdir()) == ["a.txt"]


def test_a_folder_squatting_on_a_name_refuses_the_set_before_anything_moves(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / "b.txt").mkdir()
    with pytest.raises(OptionError, match="b.txt: out_dir: a folder has the name of a document"):
        write_rendered([("a.txt", b"1"), ("b.txt", b"2")], out)
    assert sorted(p.name for p in out.iterdir()) == ["b.txt"]


def test_the_lock_names_its_holder_and_a_second_run_gives_up(tmp_path):
    out = tmp_path / "out"
    with FileSet(out, "out_dir"):
        holder = (out / LOCK_NAME).read_text()
        assert holder.startswith(f"pid {os.getpid()}, started ")
        with pytest.raises(OptionError, match=f"another bankbuild run is writing into this folder \\(pid "
                                              f"{os.getpid()}, started .*UTC\\); waited 0.2 s"):
            with FileSet(out, "out_dir", wait_s=0.2):
                pass
    assert not (out / LOCK_NAME).exists()


def test_a_killed_run_s_temporary_folder_is_removed_by_the_next(tmp_path):
    out = tmp_path / "out"
    (out / ".bankbuild-new-x1y2").mkdir(parents=True)
    (out / ".bankbuild-new-x1y2" / "results.json").write_text("{")
    write_rendered([("a.txt", b"1")], out)
    assert sorted(p.name for p in out.iterdir()) == ["a.txt"]
