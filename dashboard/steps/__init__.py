"""One module per step of the guided assessment; each has ``render()``."""
