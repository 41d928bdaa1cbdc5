"""Command line, renders, exports and reports."""
