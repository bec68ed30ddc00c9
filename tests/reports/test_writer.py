"""Documents are written whole, in place of the old ones, and readable like any file the user makes."""

import os
import stat

from bankbuild.reports.writer import write_atomic


def test_written_file_takes_the_umask_mode_not_a_private_one(tmp_path):
    old = os.umask(0o022)
    try:
        path = write_atomic(tmp_path / "bill-of-materials.csv", b"item,qty\n")
    finally:
        os.umask(old)
    assert stat.S_IMODE(path.stat().st_mode) == 0o644
    assert path.read_bytes() == b"item,qty\n"


def test_rewrite_replaces_and_leaves_no_temporary_file(tmp_path):
    target = tmp_path / "results.json"
    write_atomic(target, b"old")
    write_atomic(target, b"new")
    assert target.read_bytes() == b"new"
    assert [p.name for p in tmp_path.iterdir()] == ["results.json"]
