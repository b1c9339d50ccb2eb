"""Commands about the project file itself: ``new``."""

from __future__ import annotations

import argparse

from core.cli.common import emit_json
from core.project import SUFFIX, Project


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("new", help="create an empty project file")
    p.add_argument("project", help=f"path of the new project file (ending in {SUFFIX})")
    p.add_argument("--name", help="project name (default: the file name)")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_new)


def _new(args: argparse.Namespace) -> int:
    path = args.project if args.project.endswith(SUFFIX) else args.project + SUFFIX
    with Project.create(path, args.name) as project:
        if args.json:
            emit_json({"path": str(project.path), "name": project.name})
        else:
            print(f"Created {project.path} ({project.name}).")
    return 0
