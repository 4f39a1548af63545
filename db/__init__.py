"""The store: SQLAlchemy schema, engine/URL handling, query layer, ingest of lab data, migrations."""
