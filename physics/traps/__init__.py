"""The trap search: scan, contact, refinement, classification, wells and escape."""
