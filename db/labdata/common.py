"""What every lab-data write shares: the import result, keys from names, the material an import goes to, and
comparisons of stored numbers."""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from materials.errors import InputError
from materials.properties import FAMILIES

DEFAULT_CONFIDENCE = 0.9
_REL_TOL = 1e-12


@dataclass
class ImportResult:
    """What one import stored (SI)."""

    what: str                 # "breakdown set", "loop" or "endurance set"
    material: str
    label: str
    id: int
    n: int
    source: str
    kind: str
    sha256: str
    file: str
    censored: int = 0
    new_material: bool = False
    replaced: str | None = None   # the new label of a set or loop this import replaced
    figures: dict = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)

    def as_dict(self) -> dict:
        d = {"what": self.what, "material": self.material, "label": self.label, "id": self.id, "n": self.n,
             "source": {"key": self.source, "kind": self.kind}, "file": self.file, "sha256": self.sha256,
             "new_material": self.new_material, "replaced": self.replaced, "warnings": list(self.warnings)}
        if self.what in ("breakdown set", "endurance set"):
            d["censored"] = self.censored
            d["fit"] = self.figures
        else:
            d["energies"] = self.figures
        return d


def slugify(text: str) -> str:
    """A lower-case key made from a name: letters, digits and single hyphens."""
    s = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")
    return s[:120].rstrip("-")


def _now():
    from db.models import utcnow

    return utcnow()


def _close(a: float | None, b: float | None) -> bool:
    if a is None or b is None:
        return a is b
    return a == b or abs(a - b) <= _REL_TOL * max(abs(a), abs(b))

def _material(session, key: str):
    from sqlalchemy import select

    from db.models import Material

    return session.execute(select(Material).where(Material.key == key)).scalar_one_or_none()


def resolve_material(session, *, material_key: str | None = None, new_material: str | None = None,
                     family: str | None = None, response: str = "linear") -> tuple[object, bool]:
    """The material an import goes to: an existing key, or a new lab material made from a name and family.

    ``new_material`` makes the key from the name; an existing lab/user material with that key, name and family is
    reused (so a series of sets can name the new material each time); any other clash is refused.

    Returns:
        (the Material row, whether it was created).
    """
    from db.models import Material

    if bool(material_key) == bool(new_material):
        raise InputError("give either --material KEY or --new-material NAME --family F")
    if material_key:
        mat = _material(session, material_key)
        if mat is None:
            raise InputError(f"no material '{material_key}' in the store (see 'holdoff catalog', or use "
                             "--new-material NAME --family F)", field="--material")
        return mat, False
    name = " ".join(new_material.split())
    key = slugify(name)
    if not key:
        raise InputError(f"cannot make a key from the name '{new_material}'", field="--new-material")
    if family not in FAMILIES:
        raise InputError(f"--family '{family}' is not one of {', '.join(FAMILIES)}" if family else
                         "--new-material needs --family (" + ", ".join(FAMILIES) + ")", field="--family")
    mat = _material(session, key)
    if mat is not None:
        if mat.origin != "catalog" and mat.name == name and mat.family == family:
            return mat, False
        raise InputError(f"a material with key '{key}' already exists ({mat.name}, {mat.family}, origin "
                         f"{mat.origin}); use --material {key}", field="--new-material")
    mat = Material(key=key, name=name, family=family, form="", description="", origin="lab", response=response)
    session.add(mat)
    session.flush()
    return mat, True
