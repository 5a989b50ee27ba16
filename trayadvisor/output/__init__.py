"""(front door written in the next commit)."""
