"""`schedcheck demo`: not yet written."""
