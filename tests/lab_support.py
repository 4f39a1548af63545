"""Helpers shared by the lab-data tests: a store built from the lab mini catalog, a logical dump, file writers."""

from __future__ import annotations

from pathlib import Path

DATA = Path(__file__).parent / "data"
LAB_CATALOG = DATA / "mini_catalog"
BAD = DATA / "bad"
EXAMPLES = Path(__file__).parent.parent / "examples" / "lab"


def build_store(directory: Path) -> str:
    """A SQLite store file built from the lab mini catalog; returns its URL."""
    from db.store import build

    url = f"sqlite:///{directory / 's.sqlite'}"
    build(url, catalog_dir=LAB_CATALOG)
    return url


def logical_dump(url: str) -> dict[str, list[tuple]]:
    """Every row of every table of the store (reflected, so nothing is missed), in a fixed order."""
    from sqlalchemy import MetaData, create_engine, select

    engine = create_engine(url)
    try:
        meta = MetaData()
        meta.reflect(engine)
        out = {}
        with engine.connect() as c:
            for name, table in sorted(meta.tables.items()):
                cols = list(table.columns)
                out[name] = [tuple(r) for r in c.execute(select(*cols).order_by(*cols))]
        return out
    finally:
        engine.dispose()


def write_set(path: Path, fields, censored=None, *, unit: str = "V/um", header: dict | None = None) -> Path:
    """A breakdown series file: ``# key: value`` header lines, then ``field [unit]`` (and ``censored``) rows."""
    lines = [f"# {k}: {v}" for k, v in (header or {}).items()]
    if censored is None:
        lines.append(f"field [{unit}]")
        lines += [repr(float(x)) for x in fields]
    else:
        lines.append(f"field [{unit}],censored")
        lines += [f"{float(x)!r},{int(bool(c))}" for x, c in zip(fields, censored, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def write_loop(path: Path, fields_kV_per_cm, pol_uC_per_cm2, *, header: dict | None = None) -> Path:
    """A loop file in kV/cm and µC/cm²."""
    lines = [f"# {k}: {v}" for k, v in (header or {}).items()]
    lines.append("field [kV/cm],polarization [uC/cm^2]")
    lines += [f"{float(e)!r},{float(p)!r}" for e, p in zip(fields_kV_per_cm, pol_uC_per_cm2, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path
