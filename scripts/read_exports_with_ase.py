#!/usr/bin/env python3
"""Reads the files `cagerank export` writes with ASE, an independent reader, and prints what ASE
got from each (not run by CI; its output for the command below is committed beside it as
read_exports_with_ase.out).

  * XYZ through ASE's extended-XYZ reader: the comment line must come back as key=value pairs
    (atoms.info) with no stray keys, and 60/70 carbon atoms.
  * SDF through ASE's sdf reader (atoms only; ASE ignores bonds).
  * Gaussian input through ASE's gaussian-in reader.

    pip install ase
    cargo build --release
    target/release/cagerank export --ids C60:IPR-1,C70:1 --format xyz,sdf,gaussian \
        --out /tmp/ase-check
    python3 scripts/read_exports_with_ase.py /tmp/ase-check
"""
import pathlib
import sys

import ase
import ase.io

# What the exported XYZ comment may hold (cagerank export::comment_line).
KNOWN = {"id", "list", "number", "ipr_number", "point_group", "charge",
         "multiplicity", "spiral", "geometry"}


def show(value):
    """numpy arrays print as plain lists, so the output is stable across numpy versions."""
    return value.tolist() if hasattr(value, "tolist") else value


def main(directory):
    print(f"ase {ase.__version__}")
    bad = 0
    for path in sorted(pathlib.Path(directory).iterdir()):
        suffix = path.suffix
        if suffix == ".xyz":
            atoms = ase.io.read(path, format="extxyz")
            info = {k: show(v) for k, v in sorted(atoms.info.items())}
            stray = sorted(set(info) - KNOWN)
            bad += bool(stray)
            print(f"{path.name}: extxyz {atoms.get_chemical_formula()} info={info} stray={stray}")
        elif suffix == ".sdf":
            frames = ase.io.read(path, format="sdf", index=":")
            formulas = [a.get_chemical_formula() for a in frames]
            print(f"{path.name}: sdf {formulas}")
        elif suffix == ".gjf":
            atoms = ase.io.read(path, format="gaussian-in")
            print(f"{path.name}: gaussian-in {atoms.get_chemical_formula()}")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1] if len(sys.argv) > 1 else "."))
