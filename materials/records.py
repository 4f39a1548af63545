"""Plain records of the catalog: what a TOML file holds once validated (SI numbers, no units)."""

from __future__ import annotations

from dataclasses import dataclass, field

CONDITIONS = ("temperature_K", "frequency_Hz", "field_V_per_m", "thickness_m", "area_m2")


@dataclass(frozen=True)
class SourceRec:
    key: str
    kind: str
    citation: str
    note: str = ""


@dataclass(frozen=True)
class ValueRec:
    property: str
    value: float
    source: str
    low: float | None = None
    high: float | None = None
    temperature_K: float | None = None
    frequency_Hz: float | None = None
    field_V_per_m: float | None = None
    thickness_m: float | None = None
    area_m2: float | None = None
    note: str = ""

    def identity(self) -> tuple:
        """What makes two rows 'the same value' for update-with-history: property and conditions."""
        return (self.property,) + tuple(getattr(self, c) for c in CONDITIONS)


@dataclass
class MaterialRec:
    key: str
    name: str
    family: str
    form: str = ""
    description: str = ""
    origin: str = "catalog"
    response: str = "linear"
    values: list[ValueRec] = field(default_factory=list)
    #: the descriptive fields the record states (None: all of them); an update of a material in the store
    #: changes only these, so a file that gives only values keeps the stored form and description.
    given: frozenset | None = None


@dataclass(frozen=True)
class SourceRef:
    key: str
    kind: str
    citation: str = ""


@dataclass(slots=True)
class StoredValue:
    """A property value as read back from the store, with its source and (if retired) its history."""

    id: int
    property: str
    value: float
    source: SourceRef
    low: float | None = None
    high: float | None = None
    temperature_K: float | None = None
    frequency_Hz: float | None = None
    field_V_per_m: float | None = None
    thickness_m: float | None = None
    area_m2: float | None = None
    note: str = ""
    breakdown_set: str | None = None
    loop: str | None = None
    retired_at: str | None = None
    retired_reason: str | None = None


@dataclass
class MaterialData:
    """A material with its active values, detached from any database session."""

    key: str
    name: str
    family: str
    form: str = ""
    description: str = ""
    origin: str = "catalog"
    response: str = "linear"
    values: list[StoredValue] = field(default_factory=list)
    _index: tuple | None = field(default=None, repr=False, compare=False)

    def _by_property(self) -> dict[str, list[StoredValue]]:
        # Built on first use and rebuilt if values were added or removed since (rankings call rows() often).
        if self._index is None or self._index[0] != len(self.values) or self._index[1] is not self.values:
            idx: dict[str, list[StoredValue]] = {}
            for v in self.values:
                if v.retired_at is None:
                    idx.setdefault(v.property, []).append(v)
            self._index = (len(self.values), self.values, idx, {})
        return self._index[2]

    def cache(self) -> dict:
        """Scratch space for prepared lookups; emptied whenever the values change (see materials.lookup)."""
        self._by_property()
        return self._index[3]

    def rows(self, prop: str) -> list[StoredValue]:
        return list(self._by_property().get(prop, ()))

    def has(self, prop: str) -> bool:
        return prop in self._by_property()
