"""Print the fingerprint of the shipped catalog, for ``EXPECTED`` in tests/test_catalog_integrity.py.

Run after a deliberate catalog change and review the diff::

    .venv/bin/python tests/data/make_fingerprint.py            # print the dict
    .venv/bin/python tests/data/make_fingerprint.py --write    # or rewrite EXPECTED in the test in place

The fingerprint is counts (materials, values, sources; materials per family; values per property and per source
kind) and, per property, the sum of log10|x| over every nonzero number in its rows (value, low, high and the
stated conditions) with the count of negative numbers, so that editing any number changes it.
"""

from __future__ import annotations

import math
import pprint
import re
import sys
from collections import Counter
from pathlib import Path

NUMBERS = ("value", "low", "high", "temperature_K", "frequency_Hz", "field_V_per_m", "thickness_m", "area_m2")


def fingerprint(sources: dict, materials: list) -> dict:
    """The fingerprint of catalog records (``materials.catalog_io.load_catalog``) or store rows alike.

    ``sources`` maps key → object with ``kind``; each material has ``family`` and ``values`` whose items have
    ``property``, ``source`` (a key, or an object with ``key``) and the attributes in :data:`NUMBERS`.
    """
    rows = [v for m in materials for v in m.values]
    log_sum: dict[str, float] = {}
    negative: Counter = Counter()
    for v in rows:
        for attr in NUMBERS:
            x = getattr(v, attr)
            if x:
                log_sum[v.property] = log_sum.get(v.property, 0.0) + math.log10(abs(x))
                negative[v.property] += x < 0

    def kind(v):
        key = v.source if isinstance(v.source, str) else v.source.key
        return sources[key].kind

    return {
        "materials": len(materials),
        "values": len(rows),
        "sources": len(sources),
        "families": dict(sorted(Counter(m.family for m in materials).items())),
        "properties": dict(sorted(Counter(v.property for v in rows).items())),
        "kinds": dict(sorted(Counter(kind(v) for v in rows).items())),
        "log10_sums": {p: round(s, 6) for p, s in sorted(log_sum.items())},
        "negatives": {p: n for p, n in sorted(negative.items()) if n},
    }


TEST_FILE = Path(__file__).resolve().parents[1] / "test_catalog_integrity.py"
BEGIN, END = "# BEGIN FINGERPRINT\n", "# END FINGERPRINT\n"


def main(argv: list[str]) -> None:
    sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
    from materials.catalog_io import load_catalog

    sources, materials = load_catalog()
    block = "EXPECTED = " + pprint.pformat(fingerprint(sources, materials), width=116, sort_dicts=False) + "\n"
    if "--write" not in argv:
        sys.stdout.write(block)
        return
    text = TEST_FILE.read_text(encoding="utf-8")
    new, n = re.subn(re.escape(BEGIN) + ".*?" + re.escape(END), lambda _m: BEGIN + block + END, text, flags=re.S)
    if n != 1:
        raise SystemExit(f"{TEST_FILE}: expected one {BEGIN.strip()} … {END.strip()} block, found {n}")
    TEST_FILE.write_text(new, encoding="utf-8")
    print(f"rewrote EXPECTED in {TEST_FILE}")


if __name__ == "__main__":
    main(sys.argv[1:])
