"""`schedcheck schedule`: not yet written."""
