"""`ductgen size` (not yet registered)."""
