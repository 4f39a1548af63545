"""The initial schema: sources, materials, property values with history, breakdown sets and loops with points.

Revision ID: 0001
Revises:
Create Date: 2026-12-01

Frozen as it stood at this revision: the CHECK lists are the vocabulary of that day, so a later change to the
families, origins, source kinds or property keys needs a revision of its own.
"""

from alembic import op
import sqlalchemy as sa

revision = "0001"
down_revision = None
branch_labels = None
depends_on = None

FAMILIES = ("polymer-film", "ceramic-class-1", "ceramic-class-2", "ceramic-bulk", "glass", "mica", "oxide-film",
            "liquid", "gas", "composite")
ORIGINS = ("catalog", "lab", "user")
RESPONSES = ("linear", "nonlinear")
SOURCE_KINDS = ("handbook", "standard", "paper", "web", "common-practice", "recollection", "lab", "invented")
PROPERTIES = ("relative_permittivity", "loss_tangent", "breakdown_field", "weibull_shape", "max_temperature",
              "min_temperature", "density", "thermal_conductivity", "volume_resistivity", "specific_heat",
              "capacitance_change", "min_thickness", "self_healing", "recoverable_energy_density", "efficiency")


def _in(column: str, values) -> str:
    return f"{column} IN (" + ", ".join(f"'{v}'" for v in values) + ")"


def upgrade() -> None:
    op.create_table(
        "material",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("key", sa.String(length=200), nullable=False),
        sa.Column("name", sa.String(length=400), nullable=False),
        sa.Column("family", sa.String(length=32), nullable=False),
        sa.Column("form", sa.Text(), nullable=False),
        sa.Column("description", sa.Text(), nullable=False),
        sa.Column("origin", sa.String(length=16), nullable=False),
        sa.Column("response", sa.String(length=16), nullable=False),
        sa.CheckConstraint(_in("family", FAMILIES), name=op.f("ck_material_family")),
        sa.CheckConstraint(_in("origin", ORIGINS), name=op.f("ck_material_origin")),
        sa.CheckConstraint(_in("response", RESPONSES), name=op.f("ck_material_response")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_material")),
        sa.UniqueConstraint("key", name=op.f("uq_material_key")),
    )
    op.create_table(
        "meta",
        sa.Column("key", sa.String(length=64), nullable=False),
        sa.Column("value", sa.Text(), nullable=False),
        sa.PrimaryKeyConstraint("key", name=op.f("pk_meta")),
    )
    op.create_table(
        "source",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("key", sa.String(length=200), nullable=False),
        sa.Column("kind", sa.String(length=32), nullable=False),
        sa.Column("citation", sa.Text(), nullable=False),
        sa.Column("note", sa.Text(), nullable=False),
        sa.CheckConstraint(_in("kind", SOURCE_KINDS), name=op.f("ck_source_kind")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_source")),
        sa.UniqueConstraint("key", name=op.f("uq_source_key")),
    )
    op.create_table(
        "breakdown_set",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("material_id", sa.Integer(), nullable=False),
        sa.Column("label", sa.String(length=400), nullable=False),
        sa.Column("thickness_m", sa.Float(), nullable=True),
        sa.Column("area_m2", sa.Float(), nullable=True),
        sa.Column("temperature_K", sa.Float(), nullable=True),
        sa.Column("waveform", sa.String(length=8), nullable=False),
        sa.Column("ramp_V_per_s", sa.Float(), nullable=True),
        sa.Column("source_id", sa.Integer(), nullable=False),
        sa.Column("file_name", sa.Text(), nullable=False),
        sa.Column("sha256", sa.String(length=64), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.CheckConstraint("waveform IN ('dc', 'ac')", name=op.f("ck_breakdown_set_waveform")),
        sa.ForeignKeyConstraint(["material_id"], ["material.id"], name=op.f("fk_breakdown_set_material_id_material"),
                                ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["source_id"], ["source.id"], name=op.f("fk_breakdown_set_source_id_source")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_breakdown_set")),
        sa.UniqueConstraint("material_id", "label", name=op.f("uq_breakdown_set_material_label")),
    )
    op.create_index(op.f("ix_breakdown_set_sha256"), "breakdown_set", ["sha256"], unique=False)
    op.create_table(
        "loop",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("material_id", sa.Integer(), nullable=False),
        sa.Column("label", sa.String(length=400), nullable=False),
        sa.Column("temperature_K", sa.Float(), nullable=True),
        sa.Column("frequency_Hz", sa.Float(), nullable=True),
        sa.Column("thickness_m", sa.Float(), nullable=True),
        sa.Column("source_id", sa.Integer(), nullable=False),
        sa.Column("file_name", sa.Text(), nullable=False),
        sa.Column("sha256", sa.String(length=64), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.ForeignKeyConstraint(["material_id"], ["material.id"], name=op.f("fk_loop_material_id_material"),
                                ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["source_id"], ["source.id"], name=op.f("fk_loop_source_id_source")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_loop")),
        sa.UniqueConstraint("material_id", "label", name=op.f("uq_loop_material_label")),
    )
    op.create_index(op.f("ix_loop_sha256"), "loop", ["sha256"], unique=False)
    op.create_table(
        "breakdown_point",
        sa.Column("set_id", sa.Integer(), nullable=False),
        sa.Column("seq", sa.Integer(), nullable=False),
        sa.Column("field_V_per_m", sa.Float(), nullable=False),
        sa.Column("censored", sa.Boolean(), nullable=False),
        sa.Column("thickness_m", sa.Float(), nullable=True),
        sa.ForeignKeyConstraint(["set_id"], ["breakdown_set.id"], name=op.f("fk_breakdown_point_set_id_breakdown_set"),
                                ondelete="CASCADE"),
        sa.PrimaryKeyConstraint("set_id", "seq", name=op.f("pk_breakdown_point")),
    )
    op.create_table(
        "loop_point",
        sa.Column("loop_id", sa.Integer(), nullable=False),
        sa.Column("seq", sa.Integer(), nullable=False),
        sa.Column("field_V_per_m", sa.Float(), nullable=False),
        sa.Column("polarization_C_per_m2", sa.Float(), nullable=False),
        sa.ForeignKeyConstraint(["loop_id"], ["loop.id"], name=op.f("fk_loop_point_loop_id_loop"), ondelete="CASCADE"),
        sa.PrimaryKeyConstraint("loop_id", "seq", name=op.f("pk_loop_point")),
    )
    op.create_table(
        "property_value",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("material_id", sa.Integer(), nullable=False),
        sa.Column("property", sa.String(length=64), nullable=False),
        sa.Column("value", sa.Float(), nullable=False),
        sa.Column("low", sa.Float(), nullable=True),
        sa.Column("high", sa.Float(), nullable=True),
        sa.Column("temperature_K", sa.Float(), nullable=True),
        sa.Column("frequency_Hz", sa.Float(), nullable=True),
        sa.Column("field_V_per_m", sa.Float(), nullable=True),
        sa.Column("thickness_m", sa.Float(), nullable=True),
        sa.Column("area_m2", sa.Float(), nullable=True),
        sa.Column("source_id", sa.Integer(), nullable=False),
        sa.Column("note", sa.Text(), nullable=False),
        sa.Column("breakdown_set_id", sa.Integer(), nullable=True),
        sa.Column("loop_id", sa.Integer(), nullable=True),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.Column("retired_at", sa.DateTime(), nullable=True),
        sa.Column("retired_reason", sa.Text(), nullable=True),
        sa.CheckConstraint(_in("property", PROPERTIES), name=op.f("ck_property_value_property")),
        sa.CheckConstraint("(retired_at IS NULL) = (retired_reason IS NULL)", name=op.f("ck_property_value_retired")),
        sa.CheckConstraint("low IS NULL OR high IS NULL OR low <= high", name=op.f("ck_property_value_range")),
        sa.CheckConstraint('"temperature_K" IS NULL OR "temperature_K" > 0',
                           name=op.f("ck_property_value_temperature")),
        sa.ForeignKeyConstraint(["breakdown_set_id"], ["breakdown_set.id"],
                                name=op.f("fk_property_value_breakdown_set_id_breakdown_set"), ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["loop_id"], ["loop.id"], name=op.f("fk_property_value_loop_id_loop"),
                                ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["material_id"], ["material.id"], name=op.f("fk_property_value_material_id_material"),
                                ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["source_id"], ["source.id"], name=op.f("fk_property_value_source_id_source")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_property_value")),
    )
    op.create_index("ix_property_value_lookup", "property_value", ["material_id", "property"], unique=False)


def downgrade() -> None:
    op.drop_index("ix_property_value_lookup", table_name="property_value")
    op.drop_table("property_value")
    op.drop_table("loop_point")
    op.drop_table("breakdown_point")
    op.drop_index(op.f("ix_loop_sha256"), table_name="loop")
    op.drop_table("loop")
    op.drop_index(op.f("ix_breakdown_set_sha256"), table_name="breakdown_set")
    op.drop_table("breakdown_set")
    op.drop_table("source")
    op.drop_table("meta")
    op.drop_table("material")
