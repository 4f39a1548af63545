"""The physics of a dielectric and the curated catalog (pure: no database, no terminal)."""
