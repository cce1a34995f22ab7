"""Shared helpers of the Python reference checks: locating and running the sillage CLI."""

import json
import os
import pathlib
import subprocess

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]


def sillage_bin():
    """The CLI under test: $SILLAGE_BIN, else the debug build of this checkout."""
    path = pathlib.Path(os.environ.get("SILLAGE_BIN", ROOT / "target" / "debug" / "sillage"))
    if not path.is_file():
        raise FileNotFoundError(
            f"sillage binary not found at {path}; run `cargo build -p sillage --bin sillage` "
            "or set SILLAGE_BIN"
        )
    return path


class Cli:
    """Runs `sillage` subcommands and checks their exit status."""

    def __init__(self, binary):
        self.binary = binary

    def run(self, *args, ok=True):
        proc = subprocess.run(
            [str(self.binary), *map(str, args)], capture_output=True, text=True, timeout=120
        )
        if ok and proc.returncode != 0:
            raise AssertionError(
                f"sillage {' '.join(map(str, args))} failed ({proc.returncode}):\n{proc.stderr}"
            )
        if not ok and proc.returncode == 0:
            raise AssertionError(f"sillage {' '.join(map(str, args))} should have failed")
        return proc

    def inspect(self, *inputs):
        return json.loads(self.run("inspect", *inputs, "--json").stdout)

    def convert(self, *inputs, out, options=()):
        self.run("convert", *inputs, "--out", out, *options)
        return out


@pytest.fixture(scope="session")
def cli():
    return Cli(sillage_bin())
