"""Modal and top-level screens of the terminal UI."""
