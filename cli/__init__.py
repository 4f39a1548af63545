"""The Typer command line: parses, calls the layers below, renders (rich, plain text, JSON, files)."""
