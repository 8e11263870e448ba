"""`grower fit --write` on awkward files: the user's file is changed only as asked.

A read-only file is refused; a symbolic link is written through (the link stays a
link); hard links stay one file; CRLF line endings and a UTF-8 byte-order mark are kept;
a full disk at the backup step leaves no empty backup and the file whole.
"""

from __future__ import annotations

import errno
import os
import stat

import pytest

from grower import house
from grower.errors import InputError
from grower.fit import fit_house, write_calibration
from grower.logger import read_logger_csv
from tests.conftest import EXAMPLES
from tests.test_contract import _quiet_environment, assert_contract  # noqa: F401

SRC = (EXAMPLES / "gable-house.toml").read_bytes()
LOG = EXAMPLES / "logger-gable-house.csv"


@pytest.fixture(scope="module")
def fit_result():
    h = house.read(EXAMPLES / "gable-house.toml")
    return fit_house(h, read_logger_csv(LOG, timezone=h.site.timezone))


def _table(path) -> dict:
    return house.read(path).calibration


def test_a_read_only_file_is_refused_and_left_alone(tmp_path):
    path = tmp_path / "h.toml"
    path.write_bytes(SRC)
    path.chmod(0o444)
    rc, _out, err = assert_contract(["fit", str(path), "--log", str(LOG), "--write"], [path])
    assert rc == 2 and "read-only" in err
    assert path.read_bytes() == SRC and sorted(p.name for p in tmp_path.iterdir()) == ["h.toml"]


def test_a_symbolic_link_is_written_through(tmp_path, fit_result):
    real = tmp_path / "real" / "h.toml"
    real.parent.mkdir()
    real.write_bytes(SRC)
    link = tmp_path / "h.toml"
    link.symlink_to(real)
    backup = write_calibration(link, fit_result)
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert "k_w_per_k" in _table(real) and backup == real.with_name("h.toml.bak")
    assert backup.read_bytes() == SRC


def test_hard_links_stay_one_file(tmp_path, fit_result):
    a, b = tmp_path / "a.toml", tmp_path / "b.toml"
    a.write_bytes(SRC)
    os.link(a, b)
    write_calibration(a, fit_result)
    assert os.stat(a).st_ino == os.stat(b).st_ino and os.stat(a).st_nlink == 2
    assert "k_w_per_k" in _table(b)


def test_crlf_and_a_byte_order_mark_are_kept(tmp_path, fit_result):
    path = tmp_path / "h.toml"
    path.write_bytes(b"\xef\xbb\xbf" + SRC.replace(b"\n", b"\r\n"))
    write_calibration(path, fit_result)
    data = path.read_bytes()
    assert data.startswith(b"\xef\xbb\xbf" + SRC.replace(b"\n", b"\r\n"))
    assert data.count(b"\n") == data.count(b"\r\n")  # no bare LF added
    assert "k_w_per_k" in _table(path)


def test_a_full_disk_at_the_backup_leaves_no_empty_backup(tmp_path, fit_result, monkeypatch):
    path = tmp_path / "h.toml"
    path.write_bytes(SRC)
    real_fsync = os.fsync
    calls = []

    def full(fd):
        calls.append(fd)
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "fsync", full)
    with pytest.raises(OSError, match="No space"):
        write_calibration(path, fit_result)
    monkeypatch.setattr(os, "fsync", real_fsync)
    assert calls and path.read_bytes() == SRC
    assert sorted(p.name for p in tmp_path.iterdir()) == ["h.toml"]  # no .bak, no .tmp
    # the next run makes the first backup, not a .bak1 beside an empty one
    assert write_calibration(path, fit_result) == tmp_path / "h.toml.bak"


def test_a_full_disk_is_one_line_on_the_command_line(tmp_path, monkeypatch):
    path = tmp_path / "h.toml"
    path.write_bytes(SRC)

    def full(fd):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "fsync", full)
    rc, _out, err = assert_contract(["fit", str(path), "--log", str(LOG), "--write"], [path])
    assert rc == 2 and "No space left on device" in err and "nothing was changed" in err


def test_the_write_keeps_the_files_mode(tmp_path, fit_result):
    path = tmp_path / "h.toml"
    path.write_bytes(SRC)
    path.chmod(0o640)
    write_calibration(path, fit_result)
    assert stat.S_IMODE(os.stat(path).st_mode) == 0o640


def test_plot_onto_a_folder_leaves_no_temporary_file(tmp_path):
    h = tmp_path / "h.toml"
    h.write_bytes(SRC)
    folder = tmp_path / "night.png"
    folder.mkdir()
    argv = ["tonight", str(h), "--crop", "lettuce", "--forecast"]
    argv += [str(EXAMPLES / "forecast-cold-night.csv"), "--plot", str(folder)]
    argv += ["--start", "2026-12-03T16:00-05:00"]
    rc, _out, err = assert_contract(argv, [h])
    assert rc == 2 and "is a folder" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["h.toml", "night.png"]
    assert not list(folder.iterdir())


def test_a_file_that_would_not_be_a_valid_house_is_not_written(tmp_path, fit_result):
    path = tmp_path / "h.toml"
    bad = SRC.replace(b'width = "9 m"', b'width = "9 mm"')
    path.write_bytes(bad)
    with pytest.raises(InputError, match="house.width"):
        write_calibration(path, fit_result)
    assert path.read_bytes() == bad and sorted(p.name for p in tmp_path.iterdir()) == ["h.toml"]
