"""Reads rill's VTK maps with VTK itself (PyPI package `vtk`, the library
ParaView is built on) and checks them: every step file of the collection
loads, with the grid size, the cell arrays, NaN pressure exactly in the
inactive cells, increasing coordinates, and the unit strings in field data.

Usage: python3 check_vtk.py [RESULT_DIR]
Without RESULT_DIR it writes the demo result set of rill-output's example
(`cargo run -p rill-output --example demo_report`) into a temporary folder.
Needs `pip install vtk numpy` (not in scripts/requirements.txt: the wheel is
large; wire it into CI only if wanted).
"""

import os
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

import numpy as np
from vtkmodules.util.numpy_support import vtk_to_numpy
from vtkmodules.vtkIOXML import vtkXMLRectilinearGridReader

EXPECTED = ["pressure", "active", "porosity", "kx", "ky", "kz", "depth", "layer"]


def check_dir(out):
    passed = failed = 0
    pvd = os.path.join(out, "maps", "rill.pvd")
    sets = ET.parse(pvd).getroot().findall("./Collection/DataSet")
    times = [float(s.get("timestep")) for s in sets]
    if times != sorted(times) or not sets:
        print(f"FAIL {pvd}: timesteps {times}")
        failed += 1
    for s in sets:
        path = os.path.join(out, "maps", s.get("file"))
        reader = vtkXMLRectilinearGridReader()
        reader.SetFileName(path)
        reader.Update()
        grid = reader.GetOutput()
        problems = []
        n = grid.GetNumberOfCells()
        cd = grid.GetCellData()
        names = [cd.GetArrayName(i) for i in range(cd.GetNumberOfArrays())]
        if names != EXPECTED:
            problems.append(f"arrays {names}")
        if n == 0:
            problems.append("no cells")
        arrays = {name: vtk_to_numpy(cd.GetArray(name)) for name in names}
        for name, values in arrays.items():
            if len(values) != n:
                problems.append(f"{name}: {len(values)} values for {n} cells")
        if "pressure" in arrays and "active" in arrays:
            nan = np.isnan(arrays["pressure"])
            if not np.array_equal(nan, arrays["active"] == 0):
                problems.append("NaN pressure is not exactly the inactive cells")
        for axis, coords in zip("xyz", (grid.GetXCoordinates(), grid.GetYCoordinates(), grid.GetZCoordinates())):
            c = vtk_to_numpy(coords)
            if not np.all(np.diff(c) > 0):
                problems.append(f"{axis} coordinates do not increase")
        fd = grid.GetFieldData()
        units = {fd.GetAbstractArray(i).GetName(): fd.GetAbstractArray(i).GetValue(0) for i in range(fd.GetNumberOfArrays())}
        for key in ("TimeValue", "time_unit", "pressure_unit", "permeability_unit", "length_unit"):
            if key not in units:
                problems.append(f"field data lacks {key}")
        if "TimeValue" in units and abs(float(units["TimeValue"]) - float(s.get("timestep"))) > 1e-9:
            problems.append("TimeValue differs from the pvd timestep")
        if problems:
            print(f"FAIL {path}: " + "; ".join(problems))
            failed += 1
        else:
            passed += 1
    return passed, failed


def main():
    if len(sys.argv) > 1:
        passed, failed = check_dir(sys.argv[1])
    else:
        with tempfile.TemporaryDirectory() as tmp:
            out = os.path.join(tmp, "demo.out")
            subprocess.run(["cargo", "run", "-q", "-p", "rill-output", "--example", "demo_report", "--", out], check=True)
            passed, failed = check_dir(out)
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
