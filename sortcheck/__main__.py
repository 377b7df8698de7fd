"""``python -m sortcheck``: the same as the ``sortcheck`` command."""

from sortcheck.cli import run

if __name__ == "__main__":
    run()
