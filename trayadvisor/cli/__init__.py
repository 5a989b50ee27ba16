"""Command-line front end: argument parsing and output only; no physics here."""
