"""SQLAlchemy 2.x typed models. Every physical column is SI and carries its unit in its name.

Property values are never edited in place: a correction adds a row and retires the old one
(``retired_at`` and ``retired_reason`` set), so history is kept.
"""

from __future__ import annotations

import datetime as dt

from sqlalchemy import (Boolean, CheckConstraint, DateTime, Float, ForeignKey, Index, Integer, MetaData, String,
                        Text, UniqueConstraint)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship

from materials.properties import FAMILIES, ORIGINS, PROPERTIES, RESPONSES, SOURCE_KINDS


def _in(column: str, values) -> str:
    return f"{column} IN (" + ", ".join(f"'{v}'" for v in values) + ")"


NAMING = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}


def utcnow() -> dt.datetime:
    return dt.datetime.now(dt.timezone.utc).replace(tzinfo=None)


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING)


class Meta(Base):
    """Key–value facts about the store itself (schema revision, catalog fingerprint)."""

    __tablename__ = "meta"
    key: Mapped[str] = mapped_column(String(64), primary_key=True)
    value: Mapped[str] = mapped_column(Text)


class Source(Base):
    """Where a value comes from, with its evidence tier (``kind``)."""

    __tablename__ = "source"
    __table_args__ = (CheckConstraint(_in("kind", SOURCE_KINDS), name="kind"),)
    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    key: Mapped[str] = mapped_column(String(200), unique=True)
    kind: Mapped[str] = mapped_column(String(32))
    citation: Mapped[str] = mapped_column(Text)
    note: Mapped[str] = mapped_column(Text, default="")


class Material(Base):
    """A dielectric, by generic name."""

    __tablename__ = "material"
    __table_args__ = (
        CheckConstraint(_in("family", FAMILIES), name="family"),
        CheckConstraint(_in("origin", ORIGINS), name="origin"),
        CheckConstraint(_in("response", RESPONSES), name="response"),
    )
    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    key: Mapped[str] = mapped_column(String(200), unique=True)
    name: Mapped[str] = mapped_column(String(400))
    family: Mapped[str] = mapped_column(String(32))
    form: Mapped[str] = mapped_column(Text, default="")
    description: Mapped[str] = mapped_column(Text, default="")
    origin: Mapped[str] = mapped_column(String(16), default="catalog")
    response: Mapped[str] = mapped_column(String(16), default="linear")

    values: Mapped[list[PropertyValue]] = relationship(back_populates="material", cascade="all, delete-orphan",
                                                       passive_deletes=True)


class BreakdownSet(Base):
    """One lab breakdown series: specimens of one material at one condition."""

    __tablename__ = "breakdown_set"
    __table_args__ = (CheckConstraint("waveform IN ('dc', 'ac')", name="waveform"),
                      UniqueConstraint("material_id", "label", name="uq_breakdown_set_material_label"))
    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    material_id: Mapped[int] = mapped_column(ForeignKey("material.id", ondelete="CASCADE"))
    label: Mapped[str] = mapped_column(String(400))
    thickness_m: Mapped[float | None] = mapped_column(Float)
    area_m2: Mapped[float | None] = mapped_column(Float, doc="electrode area, m²")
    temperature_K: Mapped[float | None] = mapped_column(Float)
    waveform: Mapped[str] = mapped_column(String(8), default="dc")
    ramp_V_per_s: Mapped[float | None] = mapped_column(Float)
    source_id: Mapped[int] = mapped_column(ForeignKey("source.id"))
    file_name: Mapped[str] = mapped_column(Text, default="")
    sha256: Mapped[str] = mapped_column(String(64), index=True)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime, default=utcnow)

    points: Mapped[list[BreakdownPoint]] = relationship(back_populates="set", cascade="all, delete-orphan",
                                                        order_by="BreakdownPoint.seq", passive_deletes=True)
    source: Mapped[Source] = relationship()


class BreakdownPoint(Base):
    """One specimen: the field at breakdown (or at the end of the test when ``censored``)."""

    __tablename__ = "breakdown_point"
    set_id: Mapped[int] = mapped_column(ForeignKey("breakdown_set.id", ondelete="CASCADE"), primary_key=True)
    seq: Mapped[int] = mapped_column(Integer, primary_key=True)
    field_V_per_m: Mapped[float] = mapped_column(Float)
    censored: Mapped[bool] = mapped_column(Boolean, default=False)
    thickness_m: Mapped[float | None] = mapped_column(Float, doc="specimen thickness when given per specimen")

    set: Mapped[BreakdownSet] = relationship(back_populates="points")


class Loop(Base):
    """One measured polarisation–field loop."""

    __tablename__ = "loop"
    __table_args__ = (UniqueConstraint("material_id", "label", name="uq_loop_material_label"),)
    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    material_id: Mapped[int] = mapped_column(ForeignKey("material.id", ondelete="CASCADE"))
    label: Mapped[str] = mapped_column(String(400))
    temperature_K: Mapped[float | None] = mapped_column(Float)
    frequency_Hz: Mapped[float | None] = mapped_column(Float)
    thickness_m: Mapped[float | None] = mapped_column(Float)
    source_id: Mapped[int] = mapped_column(ForeignKey("source.id"))
    file_name: Mapped[str] = mapped_column(Text, default="")
    sha256: Mapped[str] = mapped_column(String(64), index=True)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime, default=utcnow)

    points: Mapped[list[LoopPoint]] = relationship(back_populates="loop", cascade="all, delete-orphan",
                                                   order_by="LoopPoint.seq", passive_deletes=True)
    source: Mapped[Source] = relationship()


class LoopPoint(Base):
    """One (field, polarisation) sample of a loop, in measured order."""

    __tablename__ = "loop_point"
    loop_id: Mapped[int] = mapped_column(ForeignKey("loop.id", ondelete="CASCADE"), primary_key=True)
    seq: Mapped[int] = mapped_column(Integer, primary_key=True)
    field_V_per_m: Mapped[float] = mapped_column(Float)
    polarization_C_per_m2: Mapped[float] = mapped_column(Float)

    loop: Mapped[Loop] = relationship(back_populates="points")


class EnduranceSet(Base):
    """One lab endurance (life) test: units of one material held at constant stress until they fail or the test
    stops. The stress is a voltage (V) or a field (V/m), as ``stress_kind`` says."""

    __tablename__ = "endurance_set"
    __table_args__ = (CheckConstraint("stress_kind IN ('voltage', 'field')", name="stress_kind"),
                      UniqueConstraint("material_id", "label", name="uq_endurance_set_material_label"))
    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    material_id: Mapped[int] = mapped_column(ForeignKey("material.id", ondelete="CASCADE"))
    label: Mapped[str] = mapped_column(String(400))
    stress_kind: Mapped[str] = mapped_column(String(16), default="voltage")
    thickness_m: Mapped[float | None] = mapped_column(Float)
    area_m2: Mapped[float | None] = mapped_column(Float, doc="electrode area, m²")
    temperature_K: Mapped[float | None] = mapped_column(Float, doc="set temperature when every unit shares one")
    source_id: Mapped[int] = mapped_column(ForeignKey("source.id"))
    file_name: Mapped[str] = mapped_column(Text, default="")
    sha256: Mapped[str] = mapped_column(String(64), index=True)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime, default=utcnow)

    points: Mapped[list[EndurancePoint]] = relationship(back_populates="set", cascade="all, delete-orphan",
                                                        order_by="EndurancePoint.seq", passive_deletes=True)
    source: Mapped[Source] = relationship()


class EndurancePoint(Base):
    """One unit of an endurance set: time to failure (or to the end of the test when ``censored``), in s."""

    __tablename__ = "endurance_point"
    set_id: Mapped[int] = mapped_column(ForeignKey("endurance_set.id", ondelete="CASCADE"), primary_key=True)
    seq: Mapped[int] = mapped_column(Integer, primary_key=True)
    time_s: Mapped[float] = mapped_column(Float)
    stress: Mapped[float] = mapped_column(Float, doc="V, or V/m for a field set")
    temperature_K: Mapped[float | None] = mapped_column(Float)
    censored: Mapped[bool] = mapped_column(Boolean, default=False)

    set: Mapped[EnduranceSet] = relationship(back_populates="points")


class PropertyValue(Base):
    """One value of one property of one material, SI, with its conditions and its source.

    Conditions are nullable (= not stated). ``low``/``high`` give a range in the same SI unit as ``value``.
    """

    __tablename__ = "property_value"
    __table_args__ = (
        CheckConstraint(_in("property", PROPERTIES), name="property"),
        CheckConstraint("low IS NULL OR high IS NULL OR low <= high", name="range"),
        # Quoted: PostgreSQL folds unquoted names to lower case, and the column is "temperature_K".
        CheckConstraint('"temperature_K" IS NULL OR "temperature_K" > 0', name="temperature"),
        CheckConstraint("(retired_at IS NULL) = (retired_reason IS NULL)", name="retired"),
        Index("ix_property_value_lookup", "material_id", "property"),
    )
    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    material_id: Mapped[int] = mapped_column(ForeignKey("material.id", ondelete="CASCADE"))
    property: Mapped[str] = mapped_column(String(64))
    value: Mapped[float] = mapped_column(Float, doc="typical value, SI unit of the property")
    low: Mapped[float | None] = mapped_column(Float)
    high: Mapped[float | None] = mapped_column(Float)
    temperature_K: Mapped[float | None] = mapped_column(Float)
    frequency_Hz: Mapped[float | None] = mapped_column(Float)
    field_V_per_m: Mapped[float | None] = mapped_column(Float)
    thickness_m: Mapped[float | None] = mapped_column(Float)
    area_m2: Mapped[float | None] = mapped_column(Float)
    # Indexed (revision 0002): joins by source, and cascading deletes of a set or loop, would scan otherwise.
    source_id: Mapped[int] = mapped_column(ForeignKey("source.id"), nullable=False, index=True)
    note: Mapped[str] = mapped_column(Text, default="")
    breakdown_set_id: Mapped[int | None] = mapped_column(ForeignKey("breakdown_set.id", ondelete="CASCADE"),
                                                         index=True)
    loop_id: Mapped[int | None] = mapped_column(ForeignKey("loop.id", ondelete="CASCADE"), index=True)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime, default=utcnow)
    retired_at: Mapped[dt.datetime | None] = mapped_column(DateTime)
    retired_reason: Mapped[str | None] = mapped_column(Text)
    # Last, as revision 0004 added it: a life_exponent or activation_energy fitted from an endurance set.
    endurance_set_id: Mapped[int | None] = mapped_column(ForeignKey("endurance_set.id", ondelete="CASCADE"),
                                                         index=True)

    material: Mapped[Material] = relationship(back_populates="values")
    source: Mapped[Source] = relationship()
