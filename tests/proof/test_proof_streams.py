"""Proofs are read as streams with bounds: a compression bomb is refused at once, memory stays flat.

The bomb of the issue (a megabyte of gzip unpacking to a gigabyte) took 28 s and 3.1 GB
before it was rejected; here every hostile proof must be refused in one report line within
a few seconds by ``exactsyn check`` in a fresh process whose peak resident memory stays
well under what the file unpacks to, and an untouched certificate must still check (the
positive control).
"""

from __future__ import annotations

import gzip
import json
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest

import exactsyn as ex
from exactsyn.proof.checker import check_certificate


@pytest.fixture(scope="module")
def certificate(tmp_path_factory: pytest.TempPathFactory) -> Path:
    d = tmp_path_factory.mktemp("cert") / "c"
    ex.synthesise([1, 0, 3, 2, 5, 7, 4, 6], library="nct", bounds="cheap", certificate=d)
    assert check_certificate(d).ok  # positive control
    return d


def first_proof(d: Path) -> str:
    data = json.loads((d / "result.json").read_text())
    return next(q["proof"] for q in data["queries"] if q.get("proof"))


PEAK = (
    "import atexit, resource, sys\n"
    "atexit.register(lambda: print('PEAK_KIB', resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, file=sys.stderr))\n"
    "from exactsyn.cli import main\n"
    "main(args=sys.argv[1:], prog_name='exactsyn')\n"
)


def check_in_process(d: Path) -> tuple[float, float, subprocess.CompletedProcess[str]]:
    """``exactsyn check d`` in a fresh process: seconds, peak resident MiB, the run."""
    t = time.perf_counter()
    r = subprocess.run([sys.executable, "-c", PEAK, "check", str(d)], capture_output=True, text=True, timeout=120)
    took = time.perf_counter() - t
    return took, int(r.stderr.split("PEAK_KIB")[1].split()[0]) / 1024, r


def checked_with_bomb(certificate: Path, tmp: Path, piece: bytes, total: int) -> tuple[float, float, str]:
    """The check of the certificate with its first proof replaced: seconds, peak MiB above the
    check of the untouched certificate, stdout."""
    d = tmp / "bomb"
    shutil.copytree(certificate, d)
    with gzip.open(d / first_proof(d), "wb", compresslevel=9) as fh:
        block = piece * ((1 << 20) // len(piece))
        for _ in range(total // len(block)):
            fh.write(block)
    _, baseline, good = check_in_process(certificate)
    assert good.returncode == 0, good.stdout
    took, peak, r = check_in_process(d)
    assert r.returncode == 1, r.stderr  # rejected, as a check that failed (not bad input)
    return took, peak - baseline, r.stdout


@pytest.mark.parametrize(
    "piece, words",
    [
        (b"0", "longer than 16 MiB"),  # one endless line of digits
        (b"0 d 0\n", "unpacks to more than"),  # valid deletion lines, repeated
        (b"\x00\x01\n", "not LRAT text"),  # binary lines
    ],
)
def test_a_compression_bomb_is_refused_at_once_with_flat_memory(
    certificate: Path, tmp_path: Path, piece: bytes, words: str
) -> None:
    total = 256 << 20  # unpacks to 256 MiB, packs to a fraction of a megabyte
    took, peak, out = checked_with_bomb(certificate, tmp_path, piece, total)
    assert took < 10, took
    assert peak < 64, peak  # MiB more than a good proof: never the unpacked text, a line at a time
    fail = [line for line in out.splitlines() if line.startswith("FAIL  k=")]
    assert len(fail) == 1 and words in fail[0], out


def test_a_real_proof_is_read_as_a_stream_and_still_checks(certificate: Path) -> None:
    report = check_certificate(certificate)
    assert report.ok
    name = first_proof(certificate)
    line = next(r for r in report.lines if r.what.startswith("k=") and r.ok)
    unpacked = len(gzip.decompress((certificate / name).read_bytes()))
    assert f"{unpacked} bytes" in " ".join(r.detail for r in report.lines)
    assert "LRAT refutation checked" in line.detail
