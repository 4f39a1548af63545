"""Endurance sets: lab life tests (time to failure at constant stress) and the values fitted from them.

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-02

Adds the tables ``endurance_set`` and ``endurance_point``, and ``property_value.endurance_set_id`` (indexed, like
the other foreign keys of that table since revision 0002) so that a ``life_exponent`` or ``activation_energy``
fitted from a set refers to it and is retired with it.
"""

from alembic import op
import sqlalchemy as sa

revision = "0004"
down_revision = "0003"
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table(
        "endurance_set",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("material_id", sa.Integer(), nullable=False),
        sa.Column("label", sa.String(length=400), nullable=False),
        sa.Column("stress_kind", sa.String(length=16), nullable=False),
        sa.Column("thickness_m", sa.Float(), nullable=True),
        sa.Column("area_m2", sa.Float(), nullable=True),
        sa.Column("temperature_K", sa.Float(), nullable=True),
        sa.Column("source_id", sa.Integer(), nullable=False),
        sa.Column("file_name", sa.Text(), nullable=False),
        sa.Column("sha256", sa.String(length=64), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.CheckConstraint("stress_kind IN ('voltage', 'field')", name=op.f("ck_endurance_set_stress_kind")),
        sa.ForeignKeyConstraint(["material_id"], ["material.id"], name=op.f("fk_endurance_set_material_id_material"),
                                ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["source_id"], ["source.id"], name=op.f("fk_endurance_set_source_id_source")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_endurance_set")),
        sa.UniqueConstraint("material_id", "label", name=op.f("uq_endurance_set_material_label")),
    )
    op.create_index(op.f("ix_endurance_set_sha256"), "endurance_set", ["sha256"], unique=False)
    op.create_table(
        "endurance_point",
        sa.Column("set_id", sa.Integer(), nullable=False),
        sa.Column("seq", sa.Integer(), nullable=False),
        sa.Column("time_s", sa.Float(), nullable=False),
        sa.Column("stress", sa.Float(), nullable=False),
        sa.Column("temperature_K", sa.Float(), nullable=True),
        sa.Column("censored", sa.Boolean(), nullable=False),
        sa.ForeignKeyConstraint(["set_id"], ["endurance_set.id"],
                                name=op.f("fk_endurance_point_set_id_endurance_set"), ondelete="CASCADE"),
        sa.PrimaryKeyConstraint("set_id", "seq", name=op.f("pk_endurance_point")),
    )
    # SQLite cannot add a foreign key to an existing table; batch mode rebuilds it, PostgreSQL alters it.
    with op.batch_alter_table("property_value") as batch:
        batch.add_column(sa.Column("endurance_set_id", sa.Integer(), nullable=True))
        batch.create_foreign_key(op.f("fk_property_value_endurance_set_id_endurance_set"), "endurance_set",
                                 ["endurance_set_id"], ["id"], ondelete="CASCADE")
        batch.create_index(op.f("ix_property_value_endurance_set_id"), ["endurance_set_id"], unique=False)
    op.execute(sa.text("UPDATE meta SET value = '0004' WHERE key = 'schema_revision'"))


def downgrade() -> None:
    with op.batch_alter_table("property_value") as batch:
        batch.drop_index(op.f("ix_property_value_endurance_set_id"))
        batch.drop_constraint(op.f("fk_property_value_endurance_set_id_endurance_set"), type_="foreignkey")
        batch.drop_column("endurance_set_id")
    op.drop_table("endurance_point")
    op.drop_index(op.f("ix_endurance_set_sha256"), table_name="endurance_set")
    op.drop_table("endurance_set")
    op.execute(sa.text("UPDATE meta SET value = '0003' WHERE key = 'schema_revision'"))
