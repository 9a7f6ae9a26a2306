"""Reading analyses and profiles into canonical form, and writing outputs atomically."""
