"""Property keys for layer limits, the thickness law, ratings, life laws and gas constants.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02

Adds ``max_thickness``, ``thickness_exponent``, ``temperature_index``, ``life_exponent``, ``activation_energy``,
``townsend_a``, ``townsend_b`` and ``secondary_emission`` to the CHECK on ``property_value.property``. Frozen as it
stood at this revision, like the initial one.
"""

from alembic import op

revision = "0003"
down_revision = "0002"
branch_labels = None
depends_on = None

OLD = ("relative_permittivity", "loss_tangent", "breakdown_field", "weibull_shape", "max_temperature",
       "min_temperature", "density", "thermal_conductivity", "volume_resistivity", "specific_heat",
       "capacitance_change", "min_thickness", "self_healing", "recoverable_energy_density", "efficiency")
NEW = OLD + ("max_thickness", "thickness_exponent", "temperature_index", "life_exponent", "activation_energy",
             "townsend_a", "townsend_b", "secondary_emission")


def _in(column: str, values) -> str:
    return f"{column} IN (" + ", ".join(f"'{v}'" for v in values) + ")"


def _swap(keys) -> None:
    # SQLite cannot alter a CHECK in place; batch mode rebuilds the table, PostgreSQL alters it.
    with op.batch_alter_table("property_value") as batch:
        batch.drop_constraint(op.f("ck_property_value_property"), type_="check")
        batch.create_check_constraint(op.f("ck_property_value_property"), _in("property", keys))


def upgrade() -> None:
    _swap(NEW)
    op.execute("UPDATE meta SET value = '0003' WHERE key = 'schema_revision'")


def downgrade() -> None:
    op.execute("DELETE FROM property_value WHERE property NOT IN (" + ", ".join(f"'{v}'" for v in OLD) + ")")
    _swap(OLD)
    op.execute("UPDATE meta SET value = '0002' WHERE key = 'schema_revision'")
