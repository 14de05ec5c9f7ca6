#!/usr/bin/env python3
"""Open antinode's VTK XML outputs with the `vtk` package and check what they hold.

For every .vtu given (and every file listed by a given .pvd) this prints the number of
points and cells, the cell types, and each point/cell array with its length, components
and value range. It exits non-zero when a file cannot be read, when the reader reports
an error, when an array's length differs from the point or cell count, when an array
holds NaN or infinite values, or when an expectation passed on the command line fails.

Examples:
    python3 tests/python/check_vtk.py out/mesh.vtu --expect-cells 1234 \\
        --expect-points 456 --arrays region,quality --cell-types tetra
    python3 tests/python/check_vtk.py out/boundary.vtu --arrays tag --cell-types triangle
    python3 tests/python/check_vtk.py out/modes.pvd --expect-datasets 20 --arrays E_real,region

Needs `pip install vtk`.
"""

import argparse
import os
import sys
import xml.etree.ElementTree as ET

try:
    import numpy as np
    from vtkmodules.vtkCommonCore import vtkCommand, vtkVersion
    from vtkmodules.vtkIOXML import vtkXMLUnstructuredGridReader
    from vtkmodules.util.misc import calldata_type
    from vtkmodules.util.numpy_support import vtk_to_numpy
    from vtkmodules.util.vtkConstants import VTK_STRING
except ImportError as e:  # pragma: no cover - depends on the machine
    sys.exit(f"check_vtk: the 'vtk' Python package is needed (pip install vtk): {e}")

CELL_TYPE_NAMES = {5: "triangle", 10: "tetra", 12: "hexahedron", 24: "quadratic_tetra"}
CELL_TYPE_CODES = {v: k for k, v in CELL_TYPE_NAMES.items()}


class ErrorCatcher:
    """Collects the error messages a VTK reader emits instead of only printing them."""

    def __init__(self):
        self.messages = []

    @calldata_type(VTK_STRING)
    def __call__(self, caller, event, calldata=None):
        self.messages.append(
            str(calldata).strip() if calldata else "the reader reported an error (message above)"
        )


def cell_type_arg(text):
    out = set()
    for item in text.split(","):
        item = item.strip()
        if not item:
            continue
        if item.isdigit():
            out.add(int(item))
        elif item in CELL_TYPE_CODES:
            out.add(CELL_TYPE_CODES[item])
        else:
            raise argparse.ArgumentTypeError(
                f"unknown cell type '{item}' (use {', '.join(CELL_TYPE_CODES)} or a VTK code)"
            )
    return out


def cell_type_codes(grid):
    """Per-cell VTK type codes (the accessor changed name in VTK 9.6)."""
    if (vtkVersion.GetVTKMajorVersion(), vtkVersion.GetVTKMinorVersion()) >= (9, 6):
        arr = grid.GetCellTypes()
    else:
        arr = grid.GetCellTypesArray()
    return vtk_to_numpy(arr).tolist()


def read_vtu(path):
    reader = vtkXMLUnstructuredGridReader()
    catcher = ErrorCatcher()
    reader.AddObserver(vtkCommand.ErrorEvent, catcher)
    reader.GetExecutive().AddObserver(vtkCommand.ErrorEvent, catcher)
    reader.SetFileName(path)
    reader.Update()
    return reader.GetOutput(), catcher.messages


def check_vtu(path, args, problems):
    if not os.path.isfile(path):
        problems.append(f"{path}: no such file")
        return
    grid, errors = read_vtu(path)
    for m in errors:
        problems.append(f"{path}: reader error: {m.strip()}")
    n_points = grid.GetNumberOfPoints()
    n_cells = grid.GetNumberOfCells()
    print(f"{path}: {n_points} points, {n_cells} cells")

    types = {}
    if n_cells:
        for code in cell_type_codes(grid):
            types[code] = types.get(code, 0) + 1
    for code, count in sorted(types.items()):
        print(f"  cell type {CELL_TYPE_NAMES.get(code, code)}: {count}")

    present = {}
    for kind, data, expected in (
        ("point", grid.GetPointData(), n_points),
        ("cell", grid.GetCellData(), n_cells),
    ):
        for i in range(data.GetNumberOfArrays()):
            arr = data.GetArray(i)
            if arr is None:  # string arrays and the like
                continue
            name = arr.GetName()
            tuples = arr.GetNumberOfTuples()
            comps = arr.GetNumberOfComponents()
            values = vtk_to_numpy(arr)
            finite = bool(np.isfinite(values).all()) if values.dtype.kind == "f" else True
            rng = (
                f"[{values.min():.6g}, {values.max():.6g}]" if values.size else "(empty)"
            )
            print(
                f"  {kind} array '{name}': {tuples} x {comps} {arr.GetDataTypeAsString()}, range {rng}"
            )
            present[name] = kind
            if tuples != expected:
                problems.append(
                    f"{path}: {kind} array '{name}' has {tuples} tuples, expected {expected}"
                )
            if not finite and not args.allow_nonfinite:
                problems.append(f"{path}: {kind} array '{name}' holds NaN or infinite values")

    if args.expect_points is not None and n_points != args.expect_points:
        problems.append(f"{path}: {n_points} points, expected {args.expect_points}")
    if args.expect_cells is not None and n_cells != args.expect_cells:
        problems.append(f"{path}: {n_cells} cells, expected {args.expect_cells}")
    if args.min_cells is not None and n_cells < args.min_cells:
        problems.append(f"{path}: {n_cells} cells, expected at least {args.min_cells}")
    if args.cell_types is not None:
        unexpected = set(types) - args.cell_types
        if unexpected:
            names = ", ".join(str(CELL_TYPE_NAMES.get(c, c)) for c in sorted(unexpected))
            problems.append(f"{path}: unexpected cell types {names}")
    for name in args.arrays:
        if name not in present:
            problems.append(
                f"{path}: array '{name}' missing (has: {', '.join(sorted(present)) or 'none'})"
            )


def check_pvd(path, args, problems):
    try:
        root = ET.parse(path).getroot()
    except (OSError, ET.ParseError) as e:
        problems.append(f"{path}: cannot parse: {e}")
        return
    if root.tag != "VTKFile" or root.get("type") != "Collection":
        problems.append(f"{path}: not a VTK Collection file")
        return
    datasets = root.findall("./Collection/DataSet")
    print(f"{path}: {len(datasets)} datasets")
    if args.expect_datasets is not None and len(datasets) != args.expect_datasets:
        problems.append(f"{path}: {len(datasets)} datasets, expected {args.expect_datasets}")
    base = os.path.dirname(os.path.abspath(path))
    for ds in datasets:
        rel = ds.get("file")
        step = ds.get("timestep")
        if rel is None:
            problems.append(f"{path}: a DataSet has no file attribute")
            continue
        try:
            float(step)
        except (TypeError, ValueError):
            problems.append(f"{path}: DataSet '{rel}' has a bad timestep {step!r}")
        check_vtu(os.path.join(base, rel), args, problems)


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("files", nargs="+", help=".vtu or .pvd files")
    p.add_argument("--expect-points", type=int, help="exact number of points in each .vtu")
    p.add_argument("--expect-cells", type=int, help="exact number of cells in each .vtu")
    p.add_argument("--min-cells", type=int, help="least number of cells in each .vtu")
    p.add_argument(
        "--arrays",
        type=lambda s: [a for a in s.split(",") if a],
        default=[],
        help="comma-separated array names (point or cell data) each .vtu must have",
    )
    p.add_argument(
        "--cell-types",
        type=cell_type_arg,
        help="comma-separated allowed cell types: triangle, tetra, quadratic_tetra or VTK codes",
    )
    p.add_argument("--expect-datasets", type=int, help="number of files each .pvd lists")
    p.add_argument(
        "--allow-nonfinite", action="store_true", help="do not fail on NaN or infinite values"
    )
    args = p.parse_args(argv)

    problems = []
    for f in args.files:
        if f.lower().endswith(".pvd"):
            check_pvd(f, args, problems)
        else:
            check_vtu(f, args, problems)
    if problems:
        for m in problems:
            print(f"FAIL {m}", file=sys.stderr)
        return 1
    print("OK")
    return 0


if __name__ == "__main__":
    sys.exit(main())
