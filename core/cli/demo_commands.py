"""The ``demo`` command: write the invented demo survey and a ready demo project."""

from __future__ import annotations

import argparse
from pathlib import Path

from core.cli.common import emit_json
from core.demo import (
    FILE_NAMES,
    MANIFEST_NAME,
    PROJECT_NAME,
    SEED,
    build_demo_project,
    write_demo_files,
)
from core.errors import PlaincountError
from core.project import Project


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "demo",
        help="write the invented demo survey (two waves), its manifest and a demo project",
    )
    p.add_argument("folder", help="folder to write into (created if needed)")
    p.add_argument(
        "--seed", type=int, default=SEED, help=f"random seed of the invented data (default {SEED})"
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_demo)


def _demo(args: argparse.Namespace) -> int:
    folder = Path(args.folder)
    if (folder / PROJECT_NAME).exists():
        # Checked first so that nothing is generated or written in vain.
        raise PlaincountError(
            f"{folder / PROJECT_NAME} already exists; it was left as it is. Delete it or "
            "choose another folder."
        )
    manifest = write_demo_files(folder, seed=args.seed)
    project_path = build_demo_project(folder, seed=args.seed)
    with Project.open(project_path) as project:
        waves = [w.label for w in project.waves()]
    files = {label: str(folder / name) for label, name in FILE_NAMES.items()}
    if args.json:
        emit_json(
            {
                "folder": str(folder),
                "seed": manifest["seed"],
                "files": files,
                "manifest": str(folder / MANIFEST_NAME),
                "project": str(project_path),
                "waves_in_project": waves,
                "rows": {label: w["rows"] for label, w in manifest["waves"].items()},
                "problems": len(manifest["problems"]),
            }
        )
        return 0
    print(f"Wrote the invented demo survey into {folder}:")
    for label, path in files.items():
        rows = manifest["waves"][label]["rows"]
        print(f"  wave {label}: {Path(path).name} ({rows} responses)")
    print(f"  {MANIFEST_NAME}: {len(manifest['problems'])} planted problems, listed for checking")
    print(f"  {project_path.name}: demo project with waves {', '.join(waves)}")
    print("Every name, number and answer in these files is invented.")
    return 0
