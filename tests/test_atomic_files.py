"""write_atomically: complete or unchanged, never through a planted link, no leftovers."""

from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest

from snowprobe_widgets.atomic_files import (
    PARTIAL_SUFFIX,
    clean_stale_partials,
    write_atomically,
)


def _partials(folder):
    return [n for n in os.listdir(folder) if n.endswith(PARTIAL_SUFFIX)]


def test_writes_bytes_and_streams(tmp_path):
    write_atomically(tmp_path / "a.bin", b"abc")
    assert (tmp_path / "a.bin").read_bytes() == b"abc"
    write_atomically(tmp_path / "b.npz", lambda fh: np.savez_compressed(fh, x=np.arange(3)))
    with np.load(tmp_path / "b.npz") as z:
        assert z["x"].tolist() == [0, 1, 2]
    assert _partials(tmp_path) == []
    assert (os.stat(tmp_path / "a.bin").st_mode & 0o777) == 0o644


def test_replaced_file_keeps_its_permission_bits(tmp_path):
    target = tmp_path / "keep.txt"
    target.write_text("old")
    os.chmod(target, 0o600)
    write_atomically(target, b"new")
    assert target.read_text() == "new"
    assert (os.stat(target).st_mode & 0o777) == 0o600


def test_failure_leaves_target_unchanged_and_no_temporary(tmp_path):
    target = tmp_path / "t.csv"
    target.write_text("before")

    def half_then_fail(fh):
        fh.write(b"x" * 1_500_000)
        raise OSError(28, "No space left on device")

    with pytest.raises(OSError):
        write_atomically(target, half_then_fail)
    assert target.read_text() == "before"
    assert os.listdir(tmp_path) == ["t.csv"]


def test_a_planted_link_at_every_name_is_never_written_through(tmp_path):
    victim = tmp_path / "victim.txt"
    victim.write_text("precious")
    target = tmp_path / "export.csv"
    # the old code wrote to "<target>.tmp-<pid>": plant links at that and at the target
    os.symlink(victim, f"{target}.tmp-{os.getpid()}")
    os.symlink(victim, target)
    write_atomically(target, b"data")
    assert victim.read_text() == "precious"
    assert not target.is_symlink()
    assert target.read_bytes() == b"data"


def test_nul_in_path_and_folder_target_are_refused(tmp_path):
    with pytest.raises(ValueError, match="NUL"):
        write_atomically(f"{tmp_path}/a\0b", b"x")
    with pytest.raises(IsADirectoryError):
        write_atomically(tmp_path, b"x")


def test_stale_partials_of_a_killed_writer_are_cleaned_on_the_next_write(tmp_path):
    # a writer process that dies with its temporary file in place (as a killed save would)
    code = ("import os, sys; from snowprobe_widgets import atomic_files as a\n"
            "def stop(fh):\n    fh.write(b'x' * 1000); fh.flush(); os._exit(9)\n"
            "a.write_atomically(sys.argv[1], stop)\n")
    done = subprocess.run([sys.executable, "-c", code, str(tmp_path / "s.json")])
    assert done.returncode == 9
    assert len(_partials(tmp_path)) == 1
    # a temporary of a writer that still runs (this process) and a look-alike are kept
    mine = tmp_path / f".x.json.{os.getpid()}.{'0' * 16}{PARTIAL_SUFFIX}"
    mine.write_bytes(b"in progress")
    other = tmp_path / "notes.snowprobe-partial.txt"
    other.write_text("not ours")
    write_atomically(tmp_path / "other.json", b"{}")
    assert _partials(tmp_path) == [mine.name]
    assert other.exists()
    assert clean_stale_partials(tmp_path) == []
