"""The demo generator's command-line defaults, apart from the generator so that the command line
can show them without importing pandas (``schedcheck --help`` stays fast)."""

DEFAULT_SEED = 20260216
DEFAULT_MONTHS = 3
MAX_MONTHS = 12
