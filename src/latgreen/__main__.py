"""Entry point of the command line (``latgreen`` and ``python -m latgreen``).

Ctrl-C while the numerical libraries are still being imported ends the run quietly with
status 130, like Ctrl-C at any later moment.
"""

import sys


def run() -> None:
    try:
        from .cli import main
    except KeyboardInterrupt:
        sys.stderr.write("latgreen: interrupted\n")
        sys.exit(130)
    sys.exit(main())


if __name__ == "__main__":
    run()
