"""Bundled fictional scenarios (TOML), installed as package data; see README."""
