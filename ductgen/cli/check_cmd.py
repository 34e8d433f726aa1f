"""`ductgen check` (not yet registered)."""
