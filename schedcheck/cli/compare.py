"""`schedcheck compare`: being written."""
