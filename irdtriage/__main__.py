"""``python -m irdtriage`` and the ``irdtriage`` command."""
import sys


def run() -> None:
    try:
        from .cli import main
    except KeyboardInterrupt:  # Ctrl-C while the program is still loading: nothing was started or written
        print("irdtriage: interrupted while starting; nothing was written", file=sys.stderr)
        sys.exit(130)
    sys.exit(main())


if __name__ == "__main__":
    run()
