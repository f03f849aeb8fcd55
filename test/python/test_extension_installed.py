"""The JupyterLab extension is installed where JupyterLab looks, enabled and compatible.

`make install` (or `pip install .`) must leave `jupyter labextension list` showing
jupyterlab-polyadic as "enabled OK" with no rebuild of JupyterLab. These tests run the real
command from the same environment as pytest; they fail, never skip, when the extension has
not been built or installed, naming the step to run.
"""

from __future__ import annotations

import json
import re
import subprocess
import sys
from pathlib import Path

import polyadic

ROOT = Path(__file__).resolve().parents[2]
PACKAGE_JSON = json.loads((ROOT / "package.json").read_text(encoding="utf-8"))
NPM_NAME = PACKAGE_JSON["name"]
ANSI = re.compile(r"\x1b\[[0-9;]*m")


def _labextension_list() -> str:
    """Output of `jupyter labextension list` from this interpreter's environment, uncoloured."""
    done = subprocess.run(
        [sys.executable, "-m", "jupyter", "labextension", "list"],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
    assert done.returncode == 0, f"`jupyter labextension list` failed:\n{done.stdout}\n{done.stderr}"
    # The command writes its listing to stderr; read both streams so either works.
    return ANSI.sub("", done.stdout + done.stderr)


def test_labextension_list_shows_polyadic_enabled_and_ok():
    listing = _labextension_list()
    version = re.escape(PACKAGE_JSON["version"])
    pattern = rf"^\s*{re.escape(NPM_NAME)} v{version} enabled\s+OK\b"
    assert re.search(pattern, listing, re.MULTILINE), (
        f"{NPM_NAME} v{PACKAGE_JSON['version']} is not listed as 'enabled OK'; "
        f"run `make install`. Listing:\n{listing}"
    )
    assert "is not compatible with the current JupyterLab" not in listing, listing


def test_labextension_paths_point_at_the_built_extension():
    paths = polyadic._jupyter_labextension_paths()
    assert [entry["dest"] for entry in paths] == [NPM_NAME]
    built = Path(polyadic.__file__).parent / paths[0]["src"]
    manifest = built / "package.json"
    assert manifest.is_file(), f"{manifest} is missing; run `make build`"
    built_package = json.loads(manifest.read_text(encoding="utf-8"))
    assert built_package["name"] == NPM_NAME
    assert built_package["version"] == PACKAGE_JSON["version"]
    # The federated entry point JupyterLab loads first.
    remote = built_package["jupyterlab"]["_build"]["load"]
    assert (built / remote).is_file(), f"{built / remote} is missing; run `make build`"


def test_built_extension_ships_the_current_settings_schema():
    shipped = Path(polyadic.__file__).parent / "labextension" / "schemas" / NPM_NAME / "plugin.json"
    assert shipped.is_file(), f"{shipped} is missing; run `make build`"
    # The builder copies the schemas from package.json's jupyterlab.schemaDir.
    source_path = ROOT / PACKAGE_JSON["jupyterlab"]["schemaDir"] / "plugin.json"
    assert source_path.is_file(), f"{source_path} (jupyterlab.schemaDir in package.json) is missing"
    source = json.loads(source_path.read_text(encoding="utf-8"))
    assert json.loads(shipped.read_text(encoding="utf-8")) == source, (
        f"the built settings schema differs from {source_path.relative_to(ROOT)}; run `make build`"
    )
