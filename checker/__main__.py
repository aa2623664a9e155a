import sys

try:
    from .cli import main
except KeyboardInterrupt:  # Ctrl-C while the command is still starting
    print("regimecheck: interrupted", file=sys.stderr)
    sys.exit(130)

sys.exit(main())
