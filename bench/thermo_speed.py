"""Benchmark: ΔrG°(T) on 1,000 temperatures, dossier's vectorised engine
against a per-point loop through Cantera's species thermo (the reference
library), for CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g) (four species, NASA
7-coefficient data in both).  Both are timed in the same run; the script
prints the ratio and the largest relative difference.

    .venv/bin/python bench/thermo_speed.py
"""
from __future__ import annotations

import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))


def main() -> int:
    import cantera as ct

    from dossier.library.lookup import Library
    from dossier.engine.thermo import ReactionThermo

    lib = Library.default()
    terms = [(-1.0, "CH4", "g"), (-2.0, "O2", "g"), (1.0, "CO2", "g"), (2.0, "H2O", "g")]
    thermo = ReactionThermo(tuple(nu for nu, _, _ in terms),
                            tuple(lib.resolve(label, ph).model for _, label, ph in terms))
    ct_species = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
    ct_terms = [(nu, ct_species[label]) for nu, label, _ in terms]
    temps = np.linspace(300.0, 1500.0, 1000)

    def ours() -> np.ndarray:
        return thermo.dG(temps)

    def reference() -> np.ndarray:
        out = np.empty_like(temps)
        for i, t in enumerate(temps):
            g = 0.0
            for nu, sp in ct_terms:
                g += nu * (sp.thermo.h(t) - t * sp.thermo.s(t)) / 1000.0  # J/kmol -> J/mol
            out[i] = g
        return out

    def best_of(fn, repeat: int = 7) -> tuple[float, np.ndarray]:
        best, result = float("inf"), None
        for _ in range(repeat):
            t0 = time.perf_counter()
            result = fn()
            best = min(best, time.perf_counter() - t0)
        return best, result

    t_ours, g_ours = best_of(ours)
    t_ref, g_ref = best_of(reference)
    rel = float(np.max(np.abs(g_ours - g_ref) / np.maximum(np.abs(g_ref), 1.0)))
    print(f"dG on {temps.size} temperatures, 4-species reaction")
    print(f"  dossier (vectorised): {t_ours * 1e3:8.3f} ms")
    print(f"  Cantera per-point loop: {t_ref * 1e3:8.3f} ms")
    print(f"  speed-up: {t_ref / t_ours:.1f}x (target >= 10x)")
    print(f"  largest relative difference: {rel:.2e} (target <= 1e-9)")
    ok = t_ref / t_ours >= 10.0 and rel <= 1e-9
    print("  result:", "meets targets" if ok else "MISSES a target")
    return 0 if ok else 1


if __name__ == "__main__":
    raise SystemExit(main())
