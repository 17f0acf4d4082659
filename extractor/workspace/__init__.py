"""workspace."""
