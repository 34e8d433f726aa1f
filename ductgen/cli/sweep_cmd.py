"""`ductgen sweep` (not yet registered)."""
