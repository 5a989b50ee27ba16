"""Thin widgets of the terminal UI: they draw and post messages, never compute fields."""
