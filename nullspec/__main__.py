"""Run the command line as ``python -m nullspec``."""

from nullspec.cli import main

if __name__ == "__main__":
    raise SystemExit(main())
