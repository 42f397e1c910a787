#!/usr/bin/env python3
"""Writes tests/data/reference_compositions.json: the ideal composition of
every entry of src/base/base.toml, computed by an independent,
general-purpose library (molmass, pinned below), for tests/chem_handbook.rs
to compare our `chem` module against.

What molmass does here: the atomic weights, the molar mass and the element
mass fractions of each formula (`molmass.Formula(...).mass` and
`.composition()`). What this script does itself: it expands our formula
notation (decimal counts, the `^3+` oxidation mark, `·` for water of
crystallisation) into element counts, since molmass takes integer counts
only; a formula with decimal counts is scaled by 100 before molmass sees it
(fractions do not change; the molar mass is divided by 100 again). The test
checks these counts against our own parser, so a slip in either parser
shows. Oxide weight percentages are the usual analyst's convention
(common practice): each cation as its oxide in the oxidation state the
formula gives (Fe2+ as FeO unless marked ^3+, S in a sulfate as SO3), all H
as H2O, F as the element with the O = F2 correction, computed from
molmass's masses of the oxides. Sulfides and native elements get no oxides.

Regenerate (the exact command that made the committed file):

    python3 -m venv /tmp/molmass-venv
    /tmp/molmass-venv/bin/pip install molmass==2026.1.8
    /tmp/molmass-venv/bin/python tests/data/reference_compositions.py \
        > tests/data/reference_compositions.json
"""

import json
import re
import sys
import tomllib
from pathlib import Path

import molmass

PINNED = "2026.1.8"

# Oxide per (element, oxidation state): (oxide formula, cations per oxide).
OXIDES = {
    ("Si", 4): ("SiO2", 1),
    ("Al", 3): ("Al2O3", 2),
    ("Fe", 2): ("FeO", 1),
    ("Fe", 3): ("Fe2O3", 2),
    ("Mg", 2): ("MgO", 1),
    ("Mn", 2): ("MnO", 1),
    ("Ca", 2): ("CaO", 1),
    ("Na", 1): ("Na2O", 2),
    ("K", 1): ("K2O", 2),
    ("Li", 1): ("Li2O", 2),
    ("H", 1): ("H2O", 2),
    ("S", 6): ("SO3", 1),
}
DEFAULT_STATE = {"Si": 4, "Al": 3, "Fe": 2, "Mg": 2, "Mn": 2, "Ca": 2, "Na": 1,
                 "K": 1, "Li": 1, "H": 1, "S": 6}
# Entries whose formula is a sulfide or a native element: no oxide analysis.
NO_OXIDES = {"graphite", "molybdenite"}

TOKEN = re.compile(r"([A-Z][a-z]?)(\^(\d)\+)?(\d+(?:\.\d+)?)?|(\()|(\))(\d+(?:\.\d+)?)?")


def species_counts(formula):
    """{(element, state or None): count} of one formula in our notation."""
    total = {}
    for part_index, part in enumerate(formula.split("·")):
        factor = 1.0
        if part_index > 0:
            m = re.match(r"(\d+(?:\.\d+)?)", part)
            if m:
                factor = float(m.group(1))
                part = part[m.end():]
        stack = [{}]
        pos = 0
        while pos < len(part):
            m = TOKEN.match(part, pos)
            if not m:
                sys.exit(f"cannot read {formula!r} at {part[pos:]!r}")
            pos = m.end()
            if m.group(1):
                key = (m.group(1), int(m.group(3)) if m.group(3) else None)
                n = float(m.group(4)) if m.group(4) else 1.0
                stack[-1][key] = stack[-1].get(key, 0.0) + n
            elif m.group(5):
                stack.append({})
            else:
                inner = stack.pop()
                n = float(m.group(7)) if m.group(7) else 1.0
                for k, v in inner.items():
                    stack[-1][k] = stack[-1].get(k, 0.0) + v * n
        for k, v in stack[0].items():
            total[k] = total.get(k, 0.0) + v * factor
    return total


def element_counts(species):
    out = {}
    for (el, _), n in species.items():
        out[el] = out.get(el, 0.0) + n
    return out


def entry_record(entry):
    formula = entry["ideal_formula"]
    species = species_counts(formula)
    counts = element_counts(species)
    scale = 1 if all(abs(n - round(n)) < 1e-9 for n in counts.values()) else 100
    flat = "".join(f"{el}{round(n * scale)}" for el, n in sorted(counts.items()))
    f = molmass.Formula(flat)
    molar_mass = f.mass / scale
    elements = {item.symbol: item.fraction * 100.0 for item in f.composition().values()}
    record = {
        "entry": entry["id"],
        "ideal_formula": formula,
        "molmass_input": flat,
        "scale": scale,
        "element_counts": counts,
        "molar_mass_g_per_mol": molar_mass,
        "element_wt_percent": elements,
        "oxides_wt_percent": None,
        "halogen_correction": None,
        "oxide_total": None,
    }
    if entry["id"] in NO_OXIDES:
        return record
    oxides = {}
    fluorine = 0.0
    for (el, state), n in species.items():
        if el == "O":
            continue
        if el == "F":
            fluorine += n
            continue
        oxide, per = OXIDES[(el, state or DEFAULT_STATE[el])]
        wt = (n / per) * molmass.Formula(oxide).mass / molar_mass * 100.0
        oxides[oxide] = oxides.get(oxide, 0.0) + wt
    correction = 0.0
    if fluorine:
        f_wt = fluorine * molmass.Formula("F").mass / molar_mass * 100.0
        oxides["F"] = f_wt
        correction = f_wt * molmass.Formula("O").mass / (2 * molmass.Formula("F").mass)
    record["oxides_wt_percent"] = oxides
    record["halogen_correction"] = correction
    record["oxide_total"] = sum(oxides.values()) - correction
    return record


def main():
    if molmass.__version__ != PINNED:
        sys.exit(f"molmass {molmass.__version__} installed, {PINNED} pinned")
    base = tomllib.loads(Path(__file__).resolve().parents[2].joinpath(
        "src/base/base.toml").read_text(encoding="utf-8"))
    out = {
        "about": "Ideal compositions of the base's ideal formulae computed by molmass "
                 "(a general-purpose molecular mass library on PyPI), for "
                 "tests/chem_handbook.rs. Generated by tests/data/reference_compositions.py; "
                 "see its docstring for what molmass computes and what the script does.",
        "generator": {
            "package": "molmass",
            "version": molmass.__version__,
            "command": "python3 -m venv /tmp/molmass-venv && /tmp/molmass-venv/bin/pip install "
                       f"molmass=={PINNED} && /tmp/molmass-venv/bin/python "
                       "tests/data/reference_compositions.py > tests/data/reference_compositions.json",
        },
        "entries": [entry_record(e) for e in base["entry"]],
    }
    json.dump(out, sys.stdout, indent=1, ensure_ascii=False)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
