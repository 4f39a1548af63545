"""Index the foreign keys of property_value: source, breakdown set and loop.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-01

Listing sources with their value counts, finding unused sources, and the cascade that deletes a set's or loop's
derived values when it is refitted all look rows up by these columns; PostgreSQL does not index foreign keys by
itself, so without these each of them scans the whole value table.
"""

from alembic import op
import sqlalchemy as sa

revision = "0002"
down_revision = "0001"
branch_labels = None
depends_on = None

_INDEXES = ("source_id", "breakdown_set_id", "loop_id")


def upgrade() -> None:
    for column in _INDEXES:
        op.create_index(op.f(f"ix_property_value_{column}"), "property_value", [column], unique=False)
    op.execute(sa.text("UPDATE meta SET value = '0002' WHERE key = 'schema_revision'"))


def downgrade() -> None:
    for column in _INDEXES:
        op.drop_index(op.f(f"ix_property_value_{column}"), table_name="property_value")
    op.execute(sa.text("UPDATE meta SET value = '0001' WHERE key = 'schema_revision'"))
