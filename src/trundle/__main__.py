"""``python -m trundle`` runs the command line."""

from trundle.cli import main

if __name__ == "__main__":
    main()
