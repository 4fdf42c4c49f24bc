"""Where files named inside shared inputs (campaign files, the app's fields) may lie.

A campaign file or a path typed into the app may come from someone else; the files
they name must stay inside the project's ``datasets/`` or ``reports/`` folders (the
project root is the working directory; symbolic links are resolved), so such input
cannot make the program read or write elsewhere.  Paths given on the command line
are the user's own choice and are not limited.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["PROJECT_DATA_FOLDERS", "outside_project"]

#: Folders, relative to the working directory, that shared inputs may name files in.
PROJECT_DATA_FOLDERS = ("datasets", "reports")


def outside_project(name, *, what="a file named in a campaign file"):
    """Why ``name`` is refused, or ``""`` when it lies inside a project data folder.

    Examples
    --------
    >>> outside_project("datasets/table.csv")
    ''
    >>> outside_project("/etc/hosts").startswith("a file named in a campaign file must lie inside")
    True
    """
    target = Path(name)
    if not target.is_absolute():
        target = Path.cwd() / target
    target = target.resolve()
    for folder in PROJECT_DATA_FOLDERS:
        root = (Path.cwd() / folder).resolve()
        if target == root or root in target.parents:
            return ""
    return (f"{what} must lie inside the project's {' or '.join(f + '/' for f in PROJECT_DATA_FOLDERS)} "
            f"(relative to {Path.cwd()}); got {target}")
