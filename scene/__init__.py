"""Scene files: load, validate and convert to SI; no field math here."""
