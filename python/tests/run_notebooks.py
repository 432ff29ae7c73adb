"""Executes every notebook in notebooks/ headless (nbclient, kernel python3, working
folder notebooks/) and fails on the first cell that raises. The notebooks on disk are
not modified; with --write, the executed notebooks are written back (atomically) so that
their committed outputs are fresh."""

import argparse
import os
import sys
import tempfile
import time
from pathlib import Path

import nbformat
from nbclient import NotebookClient
from nbclient.exceptions import CellExecutionError

ROOT = Path(__file__).resolve().parents[2]


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("notebooks", nargs="*", type=Path)
    parser.add_argument("--write", action="store_true", help="write the executed notebooks back")
    parser.add_argument("--timeout", type=int, default=600, help="seconds allowed per cell")
    args = parser.parse_args()
    books = args.notebooks or sorted((ROOT / "notebooks").glob("*.ipynb"))
    if len(books) < 4:
        print(f"expected at least four notebooks, found {len(books)}", file=sys.stderr)
        return 1
    os.environ.setdefault("MPLBACKEND", "Agg")
    for path in books:
        started = time.monotonic()
        book = nbformat.read(path, as_version=4)
        client = NotebookClient(book, timeout=args.timeout, kernel_name="python3",
                                resources={"metadata": {"path": str(path.parent)}})
        try:
            client.execute()
        except CellExecutionError as e:
            print(f"{path}: a cell failed:\n{e}", file=sys.stderr)
            return 1
        print(f"ran {path.relative_to(ROOT) if path.is_relative_to(ROOT) else path} in {time.monotonic() - started:.1f} s")
        if args.write:
            with tempfile.NamedTemporaryFile("w", dir=path.parent, suffix=".ipynb", delete=False, encoding="utf-8") as f:
                nbformat.write(book, f)
            os.replace(f.name, path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
