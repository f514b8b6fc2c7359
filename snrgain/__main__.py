"""``python -m snrgain``: the same command line as the ``snrgain`` script."""

from snrgain.cli.main import main

if __name__ == "__main__":
    main()
