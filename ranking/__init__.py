"""Targets, criteria, multi-criteria ranking methods, robustness, comparison tables and charts."""
