"""Test helper: start worker processes, let them get ready, then release them all at once."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]


def run_together(worker_code: str, argvs: list[list[str]], *, env=None, timeout: float = 120) -> list[tuple]:
    """Run ``python -c worker_code ARGS`` once per entry of ``argvs``; each prints "ready" and waits for a line on
    stdin, which all get as close to the same moment as the pipes allow. Returns (returncode, stdout, stderr)."""
    procs = [subprocess.Popen([sys.executable, "-c", worker_code, *argv], cwd=REPO, env=env, stdin=subprocess.PIPE,
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for argv in argvs]
    try:
        for p in procs:
            assert p.stdout.readline().strip() == "ready", p.stderr.read()
        for p in procs:
            p.stdin.write("go\n")
            p.stdin.flush()
        results = [p.communicate(timeout=timeout) for p in procs]
    finally:
        for p in procs:
            if p.poll() is None:
                p.kill()
    return [(p.returncode, out, err) for p, (out, err) in zip(procs, results, strict=True)]
