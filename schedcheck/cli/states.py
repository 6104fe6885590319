"""`schedcheck states`: not yet written."""
