import sys

from schedcheck.cli import main

sys.exit(main())
