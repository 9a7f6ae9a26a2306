"""Drawing: maps and diagrams of what the library computed (no science here)."""
