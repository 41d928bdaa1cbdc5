"""The customer report: its pictures and plots, the HTML page and the PDF typeset from it."""
