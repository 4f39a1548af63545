"""Exclusions grouped by reason: one line per reason listing the materials it excludes, not one row per candidate.

A reason quotes numbers (a rated temperature, a loss tangent); reasons that differ only in a quoted number form one
group, the numbers that differ are written beside each material, and the layer thicknesses of one material are
listed once.
"""

from __future__ import annotations

import re

_NUM = re.compile(r"-?\d+(?:\.\d+)?(?:e[-+]?\d+)?")


def _layers(thicknesses: list) -> str:
    ts = [t for t in thicknesses if t is not None]
    return f" @ {', '.join(f'{t * 1e6:g}' for t in ts)} µm" if ts else ""


def group_exclusions(excluded: list[dict]) -> list[dict]:
    """``[{"reason", "members": [text, ...], "count"}]``, the largest group first; ``excluded`` as in a shortlist
    result (``key``, ``thickness_m``, ``reasons``)."""
    groups: dict[str, dict[str, list]] = {}
    for e in excluded:
        for reason in e.get("reasons") or []:
            norm = _NUM.sub("\0", reason)
            groups.setdefault(norm, {}).setdefault(reason, []).append((e["key"], e.get("thickness_m")))
    out = []
    for norm, texts in groups.items():
        numbers = {text: _NUM.findall(text) for text in texts}
        n_pos = norm.count("\0")
        varying = [j for j in range(n_pos) if len({tuple(v)[j] for v in numbers.values()}) > 1]
        parts = norm.split("\0")
        first = next(iter(numbers.values()))
        reason = parts[0] + "".join(("…" if j in varying else first[j]) + parts[j + 1] for j in range(n_pos))
        members: dict[str, dict] = {}
        for text, who in texts.items():
            extra = ", ".join(numbers[text][j] for j in varying)
            for key, thick in who:
                m = members.setdefault(f"{key}\0{extra}", {"key": key, "extra": extra, "thick": []})
                m["thick"].append(thick)
        listed = [m["key"] + _layers(m["thick"]) + (f" ({m['extra']})" if m["extra"] else "")
                  for m in members.values()]
        out.append({"reason": reason, "members": listed, "count": sum(len(m["thick"]) for m in members.values())})
    out.sort(key=lambda g: -g["count"])
    return out
