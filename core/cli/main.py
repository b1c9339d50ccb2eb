"""Entry point of ``plaincount-cli``. Each command module adds its subcommands."""

from __future__ import annotations

import argparse
import importlib
import os
import sys

from core.errors import PlaincountError

# Each module defines register(subparsers); a command's handler takes args and returns 0/1/2.
COMMAND_MODULES = [
    "core.cli.cleaning_commands",
    "core.cli.project_commands",
    "core.cli.import_commands",
    "core.cli.missing_commands",
    "core.cli.demo_commands",
    "core.cli.export_commands",
    "core.cli.table_commands",
    "core.cli.sampling_commands",
    "core.cli.wave_commands",
    "core.cli.group_commands",
]


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="plaincount-cli",
        description="Plaincount without a window: import, clean, tabulate and export surveys.",
    )
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name in COMMAND_MODULES:
        importlib.import_module(name).register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        code = int(args.func(args) or 0)
        sys.stdout.flush()  # inside the try: a reader that went away is handled below
        return code
    except PlaincountError as exc:
        print(f"plaincount-cli: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("plaincount-cli: stopped.", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # The reader went away (e.g. `| head`): stop quietly, as shell tools do.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0


if __name__ == "__main__":
    sys.exit(main())
