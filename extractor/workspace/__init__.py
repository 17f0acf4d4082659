"""The workspace: its folder, its typed settings and its store (where all SQL lives)."""
