"""``python -m irdtriage`` and the ``irdtriage`` command."""
import sys


def run() -> None:
    try:
        from .cli import main
    except KeyboardInterrupt:  # Ctrl-C while the program is still loading: nothing was started or written
        print("irdtriage: interrupted while starting; nothing was written", file=sys.stderr)
        sys.exit(130)
    try:
        code = main(exiting=True)
    except KeyboardInterrupt:  # Ctrl-C outside the command's own signal handling (start or end)
        from .cli import interrupted_message

        print(interrupted_message(), file=sys.stderr)
        sys.exit(130)
    sys.exit(code)


if __name__ == "__main__":
    run()
