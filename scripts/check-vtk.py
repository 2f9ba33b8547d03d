#!/usr/bin/env python3
"""Reads a run's VTK end states with VTK's own XML reader and checks them
against the run's other files.

    check-vtk.py NETWORK_DIR BINARY_OUT ASCII_OUT

NETWORK_DIR holds the run's network (pores.csv, throats.csv); BINARY_OUT and
ASCII_OUT are the output folders of the same `ganglion run`, the second made
with --vtk-ascii. For every state-*.vtp: point and line counts against the
network files and summary.json; the array names against the expected set
and against the field data `array_meanings`; radii, coordinates, throat ends
and boundary codes against the network files; the ganglia of the first
imbibition against ganglia.csv; NaN only in `pressure`, and both encodings
holding the same numbers (NaN at the same places). Any reader error or
warning fails the check. Needs the `vtk` Python package (and numpy).
"""

import csv
import json
import math
import pathlib
import sys

import numpy as np
import vtk
from vtk.util.numpy_support import vtk_to_numpy

POINT_ARRAYS = {"radius_m", "occupancy", "ganglion_id", "contact_angle_deg", "boundary"}
CELL_ARRAYS = {"radius_m", "occupancy", "ganglion_id", "contact_angle_deg"}
BOUNDARY = {"": 0, "interior": 0, "inlet": 1, "outlet": 2}  # empty: interior

failures = []


def check(ok, what):
    if not ok:
        failures.append(what)
        print(f"FAIL {what}", file=sys.stderr)


def read_csv(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def read_vtp(path):
    """The poly data of `path`; reader errors and warnings are failures."""
    messages = []
    reader = vtk.vtkXMLPolyDataReader()
    for event in ("ErrorEvent", "WarningEvent"):
        reader.AddObserver(event, lambda obj, ev: messages.append(ev))
    reader.SetFileName(str(path))
    reader.Update()
    check(not messages, f"{path}: reader reported {messages}")
    return reader.GetOutput()


def arrays(data):
    """Name -> numpy array of every array of a vtkPointData/vtkCellData."""
    return {
        data.GetArrayName(i): vtk_to_numpy(data.GetArray(i))
        for i in range(data.GetNumberOfArrays())
    }


def strings(pd, name):
    a = pd.GetFieldData().GetAbstractArray(name)
    if a is None:
        check(False, f"no field data {name}")
        return []
    return [a.GetValue(i) for i in range(a.GetNumberOfValues())]


def same(a, b):
    return a.shape == b.shape and np.array_equal(a, b, equal_nan=a.dtype.kind == "f")


def main():
    if len(sys.argv) != 4:
        sys.exit(__doc__)
    net, out_bin, out_asc = (pathlib.Path(a) for a in sys.argv[1:])
    pores = read_csv(net / "pores.csv")
    throats = read_csv(net / "throats.csv")
    summary = json.loads((out_bin / "summary.json").read_text())
    ganglia = read_csv(out_bin / "ganglia.csv")
    n_p, n_t = len(pores), len(throats)
    check((summary["network"]["pores"], summary["network"]["throats"]) == (n_p, n_t),
          "summary.json network size")
    radius_p = np.array([float(r["radius_m"]) for r in pores])
    radius_t = np.array([float(r["radius_m"]) for r in throats])
    xyz = np.array([[float(r["x_m"]), float(r["y_m"]), float(r["z_m"])] for r in pores])
    ends = np.array([[int(r["pore_a"]), int(r["pore_b"])] for r in throats])
    boundary = np.array([BOUNDARY[r["boundary"]] for r in pores])

    files = sorted(p.name for p in out_bin.glob("state-*.vtp"))
    check(len(files) == len(summary["processes"]), f"one state per process: {files}")
    check(files == sorted(p.name for p in out_asc.glob("state-*.vtp")), "same files in both folders")
    nan_total = 0
    first_imbibition = next((f for f in files if f.endswith("-imbibition.vtp")), None)
    for name in files:
        b, a = read_vtp(out_bin / name), read_vtp(out_asc / name)
        for enc, pd in (("binary", b), ("ascii", a)):
            what = f"{enc} {name}"
            check(pd.GetNumberOfPoints() == n_p, f"{what}: points {pd.GetNumberOfPoints()} != {n_p}")
            check(pd.GetNumberOfLines() == n_t, f"{what}: lines {pd.GetNumberOfLines()} != {n_t}")
            check(pd.GetNumberOfCells() == n_t, f"{what}: only line cells")
            pa, ca = arrays(pd.GetPointData()), arrays(pd.GetCellData())
            check(POINT_ARRAYS <= set(pa) <= POINT_ARRAYS | {"pressure"},
                  f"{what}: point arrays {sorted(pa)}")
            check(set(ca) == CELL_ARRAYS, f"{what}: cell arrays {sorted(ca)}")
            # array_meanings names exactly the arrays present.
            meanings = strings(pd, "array_meanings")
            named = {tuple(line.split(" | ")[1::-1]) for line in meanings}
            fd = pd.GetFieldData()
            present = {("point data", n) for n in pa} | {("cell data", n) for n in ca}
            present |= {("field data", fd.GetAbstractArray(i).GetName())
                        for i in range(fd.GetNumberOfArrays())}
            present |= {("points", "coordinates_m"), ("lines", "connectivity"), ("lines", "offsets")}
            check(named == present and len(meanings) == len(present),
                  f"{what}: array_meanings {sorted(named ^ present)}")
            check(all(len(line.split(" | ")) == 5 for line in meanings), f"{what}: five fields a line")
            check(strings(pd, "ganglion_version") == [summary["program"]["version"]],
                  f"{what}: ganglion_version")
            kind = name.rsplit("-", 1)[1].removesuffix(".vtp")
            check(any(f"({kind})" in s for s in strings(pd, "description")), f"{what}: description")
            # Against the network files.
            check(np.array_equal(pa["radius_m"], radius_p), f"{what}: pore radii")
            check(np.array_equal(ca["radius_m"], radius_t), f"{what}: throat radii")
            check(np.array_equal(vtk_to_numpy(pd.GetPoints().GetData()), xyz), f"{what}: coordinates")
            conn = vtk_to_numpy(pd.GetLines().GetConnectivityArray()).reshape(-1, 2)
            check(np.array_equal(conn, ends), f"{what}: throat ends")
            check(np.array_equal(pa["boundary"], boundary), f"{what}: boundary codes")
            for arr in (pa["occupancy"], ca["occupancy"]):
                check(set(np.unique(arr)) <= {0, 1, 2}, f"{what}: occupancy codes")
            # NaN only where a value is missing: in pressure.
            for loc, group in (("point", pa), ("cell", ca)):
                for n, v in group.items():
                    if v.dtype.kind == "f" and n != "pressure":
                        check(not np.isnan(v).any(), f"{what}: NaN in {loc} {n}")
            if "pressure" in pa:
                p = pa["pressure"]
                known = p[~np.isnan(p)]
                # Within the unit drop up to the solver's tolerance; the
                # imposed face values exactly.
                check(known.size > 0 and known.min() >= -1e-6 and known.max() <= 1 + 1e-6,
                      f"{what}: pressure within the unit drop")
                for code, imposed in ((1, 1.0), (2, 0.0)):
                    face = p[boundary == code]
                    face = face[~np.isnan(face)]
                    check(face.size > 0 and (face == imposed).all(),
                          f"{what}: pressure {imposed} on face {code}")
            if name == first_imbibition:
                gp, gc = pa["ganglion_id"], ca["ganglion_id"]
                ids = set(np.unique(np.concatenate([gp, gc]))) - {-1}
                check(ids == set(range(len(ganglia))), f"{what}: ganglion ids vs ganglia.csv")
                for g in ganglia:
                    k = int(g["id"])
                    counts = (int((gp == k).sum()), int((gc == k).sum()))
                    check(counts == (int(g["pores"]), int(g["throats"])),
                          f"{what}: ganglion {k} pores/throats {counts}")
        # Both encodings: the same numbers, NaN at the same places.
        for get in (lambda pd: pd.GetPointData(), lambda pd: pd.GetCellData()):
            ab, aa = arrays(get(b)), arrays(get(a))
            for n in ab:
                check(n in aa and same(ab[n], aa[n]), f"{name}: {n} differs between encodings")
        nb = arrays(b.GetPointData()).get("pressure")
        na = arrays(a.GetPointData()).get("pressure")
        if nb is not None:
            count = int(np.isnan(nb).sum())
            check(count == int(np.isnan(na).sum()), f"{name}: NaN count differs")
            nan_total += count
            print(f"{name}: {n_p} points, {n_t} lines, {count} NaN pressures "
                  f"({(out_bin / name).stat().st_size} B binary, {(out_asc / name).stat().st_size} B ascii)")
        else:
            print(f"{name}: {n_p} points, {n_t} lines, no pressure")
    check(first_imbibition is not None, "the run has an imbibition")
    check(nan_total > 0, "some pressure is missing (NaN) in the demo")
    if failures:
        sys.exit(f"check-vtk: {len(failures)} failures")
    print(f"check-vtk: {len(files)} states read by VTK {vtk.vtkVersion.GetVTKVersion()}, "
          "binary and ascii agree")


if __name__ == "__main__":
    main()
