"""A store's materials and values as columns (numpy arrays), for ranking thousands of materials at once.

One row per stored value, grouped by material (``start[i]:start[i + 1]`` are material ``i``'s rows) and, within a
material, ordered by property, temperature (unstated first), field (unstated first) and id. Conditions that are
not stated are NaN. :meth:`ValueTable.materials` turns rows back into the plain records of
:mod:`materials.records`, so the per-material code reads exactly what the column-wise code reads.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from materials.records import MaterialData, SourceRef, StoredValue

FLOAT_COLUMNS = ("value", "low", "high", "temperature_K", "frequency_Hz", "field_V_per_m", "thickness_m", "area_m2")


BLANK = ("", None, None, None, None)


def _floats(seq, n: int) -> np.ndarray:
    """A float column, None as NaN (an object array first: numpy's None-aware float path is the slow one)."""
    if isinstance(seq, np.ndarray) and seq.dtype.kind == "f":
        return seq.reshape(n)
    obj = np.empty(n, dtype=object)
    obj[:] = seq
    none = np.equal(obj, None)
    if none.any():
        obj[none] = np.nan
    return obj.astype(float)  # note, breakdown set, loop, retired at, retired reason


@dataclass
class ValueTable:
    # per material (length M)
    keys: list[str]
    names: list[str]
    families: list[str]
    forms: list[str]
    descriptions: list[str]
    origins: list[str]
    responses: list[str]
    # per value (length N)
    start: np.ndarray              # (M + 1,) offsets of each material's rows
    ids: np.ndarray                # int64 value ids
    prop: np.ndarray               # int codes into ``prop_names``
    prop_names: list[str]
    value: np.ndarray
    low: np.ndarray
    high: np.ndarray
    temperature_K: np.ndarray
    frequency_Hz: np.ndarray
    field_V_per_m: np.ndarray
    thickness_m: np.ndarray
    area_m2: np.ndarray
    source: np.ndarray             # int index into ``source_keys``
    source_keys: list[str]
    source_kinds: list[str]
    source_citations: list[str]
    retired: np.ndarray            # bool: a retired (superseded) row, kept for its history
    words: dict = field(default_factory=dict)   # row -> (note, breakdown set, loop, retired at, reason), if any
    _py: dict = field(default_factory=dict, repr=False)

    def __len__(self) -> int:
        return len(self.keys)

    @property
    def material_of_row(self) -> np.ndarray:
        """Material index of every row."""
        return np.repeat(np.arange(len(self.keys)), np.diff(self.start))

    def padded(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The value, low and high columns (low and high filled with the value where they are missing), each with
        one NaN past the end, so that "no row" (-1) indexes a NaN; built once per table (its columns are never
        changed after it is built)."""
        if "padded" not in self._py:
            self._py["padded"] = tuple(np.append(a, np.nan) for a in (
                self.value, np.where(np.isnan(self.low), self.value, self.low),
                np.where(np.isnan(self.high), self.value, self.high)))
        return self._py["padded"]

    def subset(self, indices: np.ndarray) -> tuple[ValueTable, np.ndarray]:
        """The materials ``indices`` (ascending) as a table of their own, and the mask of this table's rows they
        hold (in the same order as the new table's rows)."""
        idx = np.asarray(indices, dtype=np.int64)
        rows = np.zeros(len(self.keys), dtype=bool)
        rows[idx] = True
        rows = rows[self.material_of_row]
        counts = np.diff(self.start)[idx]
        new_row = np.cumsum(rows) - 1
        pick = idx.tolist()
        lists = {f: [getattr(self, f)[i] for i in pick] for f in
                 ("keys", "names", "families", "forms", "descriptions", "origins", "responses")}
        arrays = {f: getattr(self, f)[rows] for f in ("ids", "prop", *FLOAT_COLUMNS, "source", "retired")}
        words = {int(new_row[r]): w for r, w in self.words.items() if rows[r]}
        sub = ValueTable(**lists, start=np.concatenate([[0], np.cumsum(counts)]).astype(np.int64),
                         prop_names=self.prop_names, source_keys=self.source_keys, source_kinds=self.source_kinds,
                         source_citations=self.source_citations, words=words, **arrays)
        return sub, rows

    def code(self, prop: str) -> int:
        """The code of ``prop`` in this table, -1 if no row holds it."""
        try:
            return self.prop_names.index(prop)
        except ValueError:
            return -1

    def material(self, i: int) -> MaterialData:
        return self.materials([i])[0]

    def materials(self, indices=None) -> list[MaterialData]:
        """Materials ``indices`` (all by default) as :class:`MaterialData` with their values."""
        if "ids" not in self._py:
            self._py.update({c: getattr(self, c).tolist() for c in FLOAT_COLUMNS})
            self._py["ids"] = self.ids.tolist()
            self._py["prop"] = [self.prop_names[c] for c in self.prop.tolist()]
            self._py["source"] = self.source.tolist()
            self._py["refs"] = [SourceRef(key=k, kind=t, citation=c) for k, t, c in
                                zip(self.source_keys, self.source_kinds, self.source_citations, strict=True)]
        py = self._py
        cols = [py[c] for c in FLOAT_COLUMNS]
        ids, props, srcs, refs, words = py["ids"], py["prop"], py["source"], py["refs"], self.words
        out = []
        for i in (range(len(self.keys)) if indices is None else indices):
            values = []
            for r in range(int(self.start[i]), int(self.start[i + 1])):
                v, lo, hi, t, f, e, d, a = (c[r] for c in cols)
                note, bset, loop, retired_at, reason = words.get(r, BLANK)
                values.append(StoredValue(
                    id=ids[r], property=props[r], value=v, source=refs[srcs[r]],
                    low=None if lo != lo else lo, high=None if hi != hi else hi,
                    temperature_K=None if t != t else t, frequency_Hz=None if f != f else f,
                    field_V_per_m=None if e != e else e, thickness_m=None if d != d else d,
                    area_m2=None if a != a else a, note=note, breakdown_set=bset, loop=loop, retired_at=retired_at,
                    retired_reason=reason))
            out.append(MaterialData(key=self.keys[i], name=self.names[i], family=self.families[i],
                                    form=self.forms[i], description=self.descriptions[i], origin=self.origins[i],
                                    response=self.responses[i], values=values))
        return out

    @classmethod
    def from_columns(cls, materials: dict, values: dict, sources: dict, words: dict | None = None) -> ValueTable:
        """Build from plain columns (sequences or arrays), in any row order.

        ``materials``: lists ``keys, names, families, forms, descriptions, origins, responses`` (the table's
        material order). ``values``: per row ``material`` (index into those lists), ``id``, ``property`` (str, or
        int codes into a sorted ``property_names`` list),
        the float columns (None or NaN = not stated) and ``source`` (index into ``sources``). ``sources``: lists
        ``keys, kinds, citations``. ``words``: value id -> (note, breakdown set, loop, retired at, retired reason)
        for the rows that have any of them.
        """
        m = len(materials["keys"])
        mat = np.asarray(values["material"], dtype=np.int64)
        n = mat.size
        ids = np.asarray(values["id"], dtype=np.int64)
        if "property_names" in values:
            # codes into a sorted vocabulary, as the store's reader gives them
            raw = np.asarray(values["property"], dtype=np.int64).reshape(n)
            present = np.unique(raw)
            names = [values["property_names"][i] for i in present.tolist()]
            code = np.searchsorted(present, raw)
        else:
            names = sorted(set(values["property"]))
            index = {p: i for i, p in enumerate(names)}
            code = np.fromiter((index[p] for p in values["property"]), dtype=np.int64, count=n)
        floats = {c: _floats(values[c], n) for c in FLOAT_COLUMNS}

        def nulls_first(a):
            return np.where(np.isnan(a), -np.inf, a)

        order = np.lexsort((ids, nulls_first(floats["field_V_per_m"]), nulls_first(floats["temperature_K"]),
                            code, mat))
        ids = ids[order]
        by_row, retired = {}, np.zeros(n, dtype=bool)
        if words:
            pos = {v: r for r, v in enumerate(ids.tolist())}
            for vid, w in words.items():
                if vid in pos:
                    by_row[pos[vid]] = (w[0] or "", *w[1:])
                    retired[pos[vid]] = w[3] is not None
        return cls(
            keys=list(materials["keys"]), names=list(materials["names"]), families=list(materials["families"]),
            forms=list(materials["forms"]), descriptions=list(materials["descriptions"]),
            origins=list(materials["origins"]), responses=list(materials["responses"]),
            start=np.searchsorted(mat[order], np.arange(m + 1)), ids=ids, prop=code[order],
            prop_names=names, **{c: floats[c][order] for c in FLOAT_COLUMNS},
            source=np.asarray(values["source"], dtype=np.int64).reshape(n)[order],
            source_keys=list(sources["keys"]), source_kinds=list(sources["kinds"]),
            source_citations=list(sources["citations"]), retired=retired, words=by_row)

    @classmethod
    def from_materials(cls, materials: list[MaterialData]) -> ValueTable:
        """A table of ``materials`` (as loaded by :func:`db.query.load_materials`), in their order."""
        src_index: dict[tuple, int] = {}
        src_cols = {"keys": [], "kinds": [], "citations": []}
        vals = {c: [] for c in ("material", "id", "property", "source", *FLOAT_COLUMNS)}
        words = {}
        for i, md in enumerate(materials):
            for v in md.values:
                s = (v.source.key, v.source.kind, v.source.citation)
                if s not in src_index:
                    src_index[s] = len(src_cols["keys"])
                    for col, x in zip(("keys", "kinds", "citations"), s, strict=True):
                        src_cols[col].append(x)
                vals["material"].append(i)
                vals["source"].append(src_index[s])
                for c in ("id", "property", *FLOAT_COLUMNS):
                    vals[c].append(getattr(v, c))
                w = (v.note, v.breakdown_set, v.loop, v.retired_at, v.retired_reason)
                if w != BLANK:
                    words[v.id] = w
        mats = {"keys": [m.key for m in materials], "names": [m.name for m in materials],
                "families": [m.family for m in materials], "forms": [m.form for m in materials],
                "descriptions": [m.description for m in materials], "origins": [m.origin for m in materials],
                "responses": [m.response for m in materials]}
        return cls.from_columns(mats, vals, src_cols, words)
