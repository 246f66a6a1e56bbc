"""calib.atomic: a failed write leaves neither a partial target nor a temporary file.

The contract checked is POSIX rename(2) atomicity as exposed by os.replace (Python
documentation, os.replace: "If successful, the renaming will be an atomic operation (this is a
POSIX requirement)"); the tests check the observable files, not the implementation.
"""
import os

import pytest

from calib.atomic import atomic_path, write_bytes, write_text


def _names(folder):
    return sorted(os.listdir(folder))


def test_write_text_and_bytes_create_only_the_target(tmp_path):
    write_text(tmp_path / "a.csv", "x,y\n1,2\n")
    write_bytes(tmp_path / "b.bin", b"\x00\x01")
    assert _names(tmp_path) == ["a.csv", "b.bin"]
    assert (tmp_path / "a.csv").read_text() == "x,y\n1,2\n"
    assert (tmp_path / "b.bin").read_bytes() == b"\x00\x01"


def test_failure_mid_write_leaves_no_file_and_no_temp(tmp_path, monkeypatch):
    """The data are already in the temporary file when fsync fails: nothing may remain."""
    def broken_fsync(fd):
        raise OSError("disk full")
    monkeypatch.setattr(os, "fsync", broken_fsync)
    with pytest.raises(OSError, match="disk full"):
        write_text(tmp_path / "table.csv", "K\n1.0\n")
    assert _names(tmp_path) == []


def test_failure_keeps_the_old_version(tmp_path):
    target = tmp_path / "report.html"
    write_text(target, "old")
    with pytest.raises(RuntimeError):
        with atomic_path(target) as temporary:
            temporary.write_text("half of the new vers")
            raise RuntimeError("renderer crashed")
    assert _names(tmp_path) == ["report.html"]
    assert target.read_text() == "old"


def test_atomic_path_keeps_the_extension_and_replaces_on_success(tmp_path):
    target = tmp_path / "field.png"
    with atomic_path(target) as temporary:
        assert temporary.parent == tmp_path and temporary.suffix == ".png" and temporary != target
        temporary.write_bytes(b"png data")
        assert not target.exists()
    assert _names(tmp_path) == ["field.png"] and target.read_bytes() == b"png data"


def test_mode_follows_the_umask_like_an_ordinary_file(tmp_path):
    write_text(tmp_path / "plain.txt", "a")
    with open(tmp_path / "reference.txt", "w") as handle:
        handle.write("a")
    assert (os.stat(tmp_path / "plain.txt").st_mode & 0o777) == (os.stat(tmp_path / "reference.txt").st_mode & 0o777)


def test_missing_folder_is_refused(tmp_path):
    with pytest.raises(ValueError, match="does not exist"):
        write_text(tmp_path / "nope" / "a.txt", "a")
