"""Quick start of the `ganglion` Python package, notebook-style.

Run from the repository root (the paths are the bundled samples):

    python network-py/examples/quickstart.py

Everything below the marker is the README's "From Python" example.
"""
# --- example ---
import numpy as np

import ganglion

# A network: a CSV folder or a .gnet file (or ganglion.generate_network).
net = ganglion.load_network("sample-networks/kestrel-sandstone")
info = net.inspect()  # the numbers of `ganglion inspect --json`
print(f"{net.name}: {info['pores']} pores, porosity {info['porosity']:.3f}")

# A study as a dict (a study file path or TOML text works the same way).
study = {
    "network": "sample-networks/kestrel-sandstone",  # relative to base_dir (cwd)
    "seed": 7,
    "fluids": {"interfacial_tension_n_per_m": 0.030, "nonaqueous_label": "oil"},
    "wettability": {
        "receding_contact_angle_deg": [0.0, 10.0],
        "advancing_contact_angle_deg": [30.0, 50.0],
    },
    "microporosity": {"entry_pressure_pa": 1.0e6},
    "process": [
        {"kind": "drainage", "until_pc_pa": 1.0e5, "pc_steps": 20, "kr_points": 8},
        {"kind": "imbibition", "until_pc_pa": -1.0e5, "pc_steps": 20, "kr_points": 8},
    ],
}


def show(stage: str, done: int, total: int) -> None:
    if done == total:
        print(f"  {stage} done")


# output= writes the files of `ganglion run` (optional).
result = ganglion.run_study(study, output="out/quickstart", progress=show)
print(f"Sni {result.sni:.3f}  Snr {result.snr:.3f}  (model estimates)")

# Curves are NumPy arrays, one entry per recorded point (NaN: kr not computed).
imbibition = result.processes[1]
has_kr = np.isfinite(imbibition.krw)
for sw, krw, kro in zip(imbibition.sw[has_kr], imbibition.krw[has_kr], imbibition.kro[has_kr]):
    print(f"  Sw {sw:.3f}  krw {krw:.4f}  kro {kro:.4f}")
# With pandas: pandas.DataFrame(imbibition.to_dict()), pandas.DataFrame(result.ganglia.to_dict())

ganglia = result.ganglia
print(f"{len(ganglia)} trapped ganglia, {ganglia.pores.sum()} pores hold trapped oil")
end = result.end_states[1]  # per element: pores first, then throats
print(f"oil-filled elements at the end of imbibition: {end.oil.sum()} of {end.oil.size}")
