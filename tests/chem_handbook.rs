//! Checks `basal::chem` against published references.
//!
//! (a) Ideal oxide compositions computed from formulae are compared with the
//!     column "computed for the ideal formula" in the Chemistry section of the
//!     data sheets of Anthony, Bideaux, Bladh & Nichols, *Handbook of
//!     Mineralogy* (Mineral Data Publishing, Tucson; Mineralogical Society of
//!     America), within 0.05 wt % per oxide. The sheets round to 0.01 wt %
//!     and used the atomic weights of their day, so 0.05 wt % is the slack.
//!
//! (b) Atomic weights are compared with the `mendeleev` crate, version 0.8.4,
//!     an independent transcription of the CIAAW tables.

use basal::chem::{Element, Formula, OxideComposition};

/// One Handbook of Mineralogy sheet: the formula the sheet states for its
/// ideal column and the values of that column.
struct Sheet {
    /// Mineral name and sheet edition, as printed at the top of the sheet.
    sheet: &'static str,
    /// The formula of the ideal column, as the sheet writes it (converted to
    /// this crate's notation only where the sheet uses a solid-solution
    /// comma with a stated ratio).
    formula: &'static str,
    /// (component, wt %) exactly as printed in the ideal column.
    oxides: &'static [(&'static str, f64)],
    /// The "−O = F2" line, when the sheet prints one.
    halogen_correction: f64,
    /// The printed total.
    total: f64,
}

const TOLERANCE_WT_PERCENT: f64 = 0.05;

const SHEETS: &[Sheet] = &[
    // Talc, Mg3Si4O10(OH)2, Handbook of Mineralogy, © 2001 Mineral Data
    // Publishing, version 1.2; Chemistry column (3) Mg3Si4O10(OH)2.
    Sheet {
        sheet: "Talc (2001, version 1.2), column (3)",
        formula: "Mg3Si4O10(OH)2",
        oxides: &[("SiO2", 63.37), ("MgO", 31.88), ("H2O", 4.75)],
        halogen_correction: 0.0,
        total: 100.00,
    },
    // Muscovite, KAl2(Si3Al)O10(OH,F)2, Handbook of Mineralogy, © 2001
    // Mineral Data Publishing, version 1.2; Chemistry column (2)
    // KAl2(Si3Al)O10(OH)2.
    Sheet {
        sheet: "Muscovite (2001, version 1.2), column (2)",
        formula: "KAl2(Si3Al)O10(OH)2",
        oxides: &[
            ("SiO2", 45.26),
            ("Al2O3", 38.40),
            ("K2O", 11.82),
            ("H2O", 4.52),
        ],
        halogen_correction: 0.0,
        total: 100.00,
    },
    // Gypsum, CaSO4·2H2O, Handbook of Mineralogy, © 2001-2005 Mineral Data
    // Publishing, version 1; Chemistry column (2) CaSO4·2H2O.
    Sheet {
        sheet: "Gypsum (2001-2005, version 1), column (2)",
        formula: "CaSO4·2H2O",
        oxides: &[("SO3", 46.50), ("CaO", 32.57), ("H2O", 20.93)],
        halogen_correction: 0.0,
        total: 100.00,
    },
    // Fluorapophyllite, KCa4Si8O20(F,OH)·8H2O, Handbook of Mineralogy,
    // © 2001 Mineral Data Publishing, version 1.2; Chemistry column (2)
    // KCa4Si8O20F·8H2O, with its "−O = F2" line.
    Sheet {
        sheet: "Fluorapophyllite (2001, version 1.2), column (2)",
        formula: "KCa4Si8O20F·8H2O",
        oxides: &[
            ("SiO2", 52.98),
            ("CaO", 24.73),
            ("K2O", 5.19),
            ("F", 2.09),
            ("H2O", 15.89),
        ],
        halogen_correction: 0.88,
        total: 100.00,
    },
    // Nacrite, Al2Si2O5(OH)4 (the kaolinite polymorph), Handbook of
    // Mineralogy, © 2001 Mineral Data Publishing, version 1.2; Chemistry
    // column (2) Al2Si2O5(OH)4.
    Sheet {
        sheet: "Nacrite (2001, version 1.2), column (2)",
        formula: "Al2Si2O5(OH)4",
        oxides: &[("SiO2", 46.55), ("Al2O3", 39.50), ("H2O", 13.95)],
        halogen_correction: 0.0,
        total: 100.00,
    },
    // Amesite, Mg2Al(SiAl)O5(OH)4 (serpentine group), Handbook of
    // Mineralogy, © 2001 Mineral Data Publishing, version 1.2; Chemistry
    // column (3) Mg2Al(SiAl)O5(OH)4.
    Sheet {
        sheet: "Amesite (2001, version 1.2), column (3)",
        formula: "Mg2Al(SiAl)O5(OH)4",
        oxides: &[
            ("SiO2", 21.56),
            ("Al2O3", 36.58),
            ("MgO", 28.93),
            ("H2O", 12.93),
        ],
        halogen_correction: 0.0,
        total: 100.00,
    },
    // Sepiolite, Mg4Si6O15(OH)2·6H2O, Handbook of Mineralogy, © 2001
    // Mineral Data Publishing, version 1.2; Chemistry column (2)
    // Mg4Si6O15(OH)2·6H2O.
    Sheet {
        sheet: "Sepiolite (2001, version 1.2), column (2)",
        formula: "Mg4Si6O15(OH)2·6H2O",
        oxides: &[("SiO2", 55.65), ("MgO", 24.89), ("H2O", 19.46)],
        halogen_correction: 0.0,
        total: 100.00,
    },
    // Mangan-neptunite, KNa2Li(Mn2+,Fe2+)2Ti2Si8O24, Handbook of
    // Mineralogy, © 2001 Mineral Data Publishing, version 1.2; Chemistry
    // column (3) "KNa2Li(Mn,Fe)2Ti2Si8O24 with Mn:Fe = 1:1", written here
    // with one Mn and one Fe (both 2+, the defaults).
    Sheet {
        sheet: "Mangan-neptunite (2001, version 1.2), column (3)",
        formula: "KNa2LiMnFeTi2Si8O24",
        oxides: &[
            ("SiO2", 52.98),
            ("TiO2", 17.61),
            ("FeO", 7.92),
            ("MnO", 7.82),
            ("Li2O", 1.65),
            ("Na2O", 6.83),
            ("K2O", 5.19),
        ],
        halogen_correction: 0.0,
        total: 100.00,
    },
];

fn computed(sheet: &Sheet) -> OxideComposition {
    let formula = Formula::parse(sheet.formula)
        .unwrap_or_else(|e| panic!("{}: {} does not parse: {e}", sheet.sheet, sheet.formula));
    assert!(
        formula.charge_balance().is_balanced(1e-9),
        "{}: ideal formula should be neutral",
        sheet.sheet
    );
    formula
        .oxide_weight_percent()
        .unwrap_or_else(|e| panic!("{}: {e}", sheet.sheet))
}

#[test]
fn at_least_eight_handbook_sheets() {
    assert!(SHEETS.len() >= 8);
}

#[test]
fn ideal_oxide_compositions_match_the_handbook_of_mineralogy() {
    let mut failures = Vec::new();
    for sheet in SHEETS {
        let ours = computed(sheet);
        for (name, published) in sheet.oxides {
            match ours.get(name) {
                Some(wt) if (wt - published).abs() <= TOLERANCE_WT_PERCENT => {}
                other => failures.push(format!(
                    "{}: {name} computed {other:?}, published {published}",
                    sheet.sheet
                )),
            }
        }
        // Nothing computed that the sheet does not list.
        for component in &ours.components {
            if !sheet.oxides.iter().any(|(name, _)| *name == component.name) {
                failures.push(format!(
                    "{}: computed {} {:.2} is not on the sheet",
                    sheet.sheet, component.name, component.wt_percent
                ));
            }
        }
        if (ours.halogen_correction - sheet.halogen_correction).abs() > TOLERANCE_WT_PERCENT {
            failures.push(format!(
                "{}: O ≡ F, Cl correction computed {:.3}, published {}",
                sheet.sheet, ours.halogen_correction, sheet.halogen_correction
            ));
        }
        if (ours.total - sheet.total).abs() > TOLERANCE_WT_PERCENT {
            failures.push(format!(
                "{}: total computed {:.3}, published {}",
                sheet.sheet, ours.total, sheet.total
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn bound_water_matches_the_handbook_h2o_line() {
    for sheet in SHEETS {
        let Some((_, published)) = sheet.oxides.iter().find(|(n, _)| *n == "H2O") else {
            continue;
        };
        let formula =
            Formula::parse(sheet.formula).unwrap_or_else(|e| panic!("{}: {e}", sheet.sheet));
        let water = formula.bound_water_wt_percent();
        assert!(
            (water - published).abs() <= TOLERANCE_WT_PERCENT,
            "{}: bound water {water:.3}, published H2O {published}",
            sheet.sheet
        );
    }
}

/// Slack for rounding when comparing two transcriptions of the same table.
const ROUNDING_SLACK: f64 = 1e-6;

/// Elements for which `mendeleev` 0.8.4 holds an older CIAAW value than the
/// 2021 table used here, and why; each is checked in the reverse direction
/// (its value must lie within ours) instead of being skipped.
///
/// Of the other older values known in mendeleev 0.8.4, Ar, Hf, Gd and Lu are
/// not in this crate's table, and Zr is 91.224(2) in both (CIAAW changed it
/// only in 2024). Al 26.9815385(7), Mn 54.938044(3) and F 18.998403163(6)
/// are the 2013 values but lie within their own uncertainty of the 2021 ones,
/// so they need no exception.
const MENDELEEV_EXCEPTIONS: &[(&str, &str)] = &[(
    "Pb",
    "CIAAW 2021 replaced 207.2(1) by the interval [206.14, 207.94] \
     (conventional value 207.2); mendeleev 0.8.4 still has 207.2(1)",
)];

fn mendeleev_element(symbol: &str) -> Option<mendeleev::Element> {
    mendeleev::Element::iter().find(|e| e.symbol() == symbol)
}

#[test]
fn atomic_weights_agree_with_mendeleev_0_8_4() {
    use basal::chem::StandardAtomicWeight as Ours;
    use mendeleev::AtomicWeight as Theirs;

    let mut failures = Vec::new();
    for element in Element::ALL {
        let symbol = element.symbol();
        let Some(reference) = mendeleev_element(symbol) else {
            failures.push(format!("{symbol}: not in mendeleev"));
            continue;
        };
        if reference.atomic_number() != u32::from(element.atomic_number()) {
            failures.push(format!("{symbol}: atomic number differs"));
        }
        let theirs = reference.atomic_weight();
        let ours = element.standard_atomic_weight();
        let value = element.atomic_weight();
        let exception = MENDELEEV_EXCEPTIONS.iter().find(|(s, _)| *s == symbol);

        if let Some((_, why)) = exception {
            // Reverse check: mendeleev's value must fall inside our interval
            // and match our conventional value.
            let reference_value = f64::from(&theirs);
            let inside = match ours {
                Ours::Interval { low, high, .. } => {
                    low <= reference_value && reference_value <= high
                }
                Ours::Value { value, uncertainty } => {
                    (reference_value - value).abs() <= uncertainty + ROUNDING_SLACK
                }
            };
            if !inside || (reference_value - value).abs() > ROUNDING_SLACK {
                failures.push(format!("{symbol}: exception ({why}) no longer holds"));
            }
            continue;
        }

        match (&theirs, ours) {
            (
                Theirs::Interval {
                    range,
                    conventional,
                },
                Ours::Interval { low, high, .. },
            ) => {
                let (lo, hi) = (range.start() - ROUNDING_SLACK, range.end() + ROUNDING_SLACK);
                if !(lo <= value && value <= hi) {
                    failures.push(format!("{symbol}: {value} outside mendeleev {range:?}"));
                }
                if !(lo <= low && high <= hi) {
                    failures.push(format!(
                        "{symbol}: interval [{low}, {high}] not within mendeleev {range:?}"
                    ));
                }
                if (conventional - value).abs() > ROUNDING_SLACK {
                    failures.push(format!(
                        "{symbol}: conventional {value} vs mendeleev {conventional}"
                    ));
                }
            }
            (
                Theirs::Uncertainty {
                    weight,
                    uncertainty,
                },
                Ours::Value { .. },
            ) => {
                if (value - weight).abs() > uncertainty + ROUNDING_SLACK {
                    failures.push(format!(
                        "{symbol}: {value} vs mendeleev {weight} ± {uncertainty}"
                    ));
                }
            }
            (theirs, ours) => failures.push(format!(
                "{symbol}: kind differs, ours {ours:?}, mendeleev {theirs:?}"
            )),
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn every_exception_names_a_known_element() {
    for (symbol, _) in MENDELEEV_EXCEPTIONS {
        assert!(Element::from_symbol(symbol).is_some(), "{symbol}");
    }
}

#[test]
fn sulfides_and_native_elements_get_weight_fractions_only() {
    for formula in ["MoS2", "C"] {
        let f = Formula::parse(formula).unwrap_or_else(|e| panic!("{e}"));
        assert!(f.oxide_weight_percent().is_err(), "{formula}");
        let total: f64 = f.weight_fractions().iter().map(|(_, w)| w).sum();
        assert!((total - 1.0).abs() < 1e-12);
        assert!(f.charge_balance().is_balanced(1e-9));
    }
}

// ---------------------------------------------------------------------------
// (c) Entries of our own property base against published ideal compositions.
//
// The checks above are about formulae; this one is about the base: for each
// entry below, the `ideal_formula` the base ships must have the same
// composition as the formula a published source computed its ideal column
// for, and the composition computed from our entry must match every value
// that source prints, within 0.05 wt % (0.05 g/mol for a molar mass).
//
// Sources:
// - Handbook of Mineralogy (Anthony, Bideaux, Bladh & Nichols), via the
//   sheets of `SHEETS` above.
// - Mineralogy Database (D. Barthelmy, webmineral), per-mineral "Mineral
//   Data" page, "Composition" section: molecular weight, element wt % and
//   oxide wt % of the formula at the top of the page.
// - National Gem Lab (nationalgemlab.in), per-mineral page, "Composition"
//   block: molecular weight, element wt % and oxide wt % of the stated
//   chemical formula. Used where no Handbook ideal column or Mineralogy
//   Database page was at hand.
//
// Entries for which no published ideal composition was found, and which are
// therefore not checked here: molybdenite (MoS2) and graphite (C) (no page
// with Mo/S or C wt % was found), phlogopite, margarite and chlorite
// (clinochlore): their Handbook sheets print only analyses, no ideal column,
// and no Mineralogy Database page with their composition was found.
// Chrysotile and antigorite share lizardite's formula but no page of their
// own was found, so only lizardite is claimed.
// ---------------------------------------------------------------------------

/// Slack when comparing a published molar mass, g/mol: the pages print two
/// decimals and used older atomic weights.
const TOLERANCE_G_PER_MOL: f64 = 0.05;

/// A published per-mineral page with an ideal composition.
struct Page {
    /// Database, page and edition as far as known.
    source: &'static str,
    /// The chemical formula the page computes its composition for, as the
    /// page writes it.
    formula: &'static str,
    /// Printed molecular weight, g/mol.
    molar_mass: f64,
    /// (oxide, wt %) as printed.
    oxides: &'static [(&'static str, f64)],
    /// (element symbol, wt %) as printed.
    elements: &'static [(&'static str, f64)],
    /// Printed oxide total.
    total: f64,
}

/// Where the published values of one entry come from.
enum Reference {
    /// A Handbook of Mineralogy sheet of `SHEETS`, by its `sheet` title.
    Handbook(&'static str),
    /// A page of another named database.
    Page(Page),
}

/// A reference resolved to the values it publishes.
enum Published<'a> {
    Sheet(&'a Sheet),
    Page(&'a Page),
}

/// One entry of our base and the publication its ideal composition is
/// checked against.
struct EntryCheck {
    /// Entry id in `base.toml`.
    id: &'static str,
    reference: Reference,
}

const ENTRY_CHECKS: &[EntryCheck] = &[
    // The six entries the Handbook sheets above already cover.
    EntryCheck {
        id: "talc",
        reference: Reference::Handbook("Talc (2001, version 1.2), column (3)"),
    },
    EntryCheck {
        id: "muscovite",
        reference: Reference::Handbook("Muscovite (2001, version 1.2), column (2)"),
    },
    EntryCheck {
        id: "gypsum",
        reference: Reference::Handbook("Gypsum (2001-2005, version 1), column (2)"),
    },
    EntryCheck {
        id: "apophyllite",
        reference: Reference::Handbook("Fluorapophyllite (2001, version 1.2), column (2)"),
    },
    // Our kaolinite entry has the formula of the nacrite sheet's ideal
    // column (the two are polymorphs of Al2Si2O5(OH)4).
    EntryCheck {
        id: "kaolinite",
        reference: Reference::Handbook("Nacrite (2001, version 1.2), column (2)"),
    },
    EntryCheck {
        id: "sepiolite",
        reference: Reference::Handbook("Sepiolite (2001, version 1.2), column (2)"),
    },
    // Pyrophyllite: Mineralogy Database, "Pyrophyllite Mineral Data"
    // (webmineral.com, Pyrophyllite data page), Composition of
    // Al2Si4O10(OH)2: MW 360.31 gm; Al 14.98 %, Si 31.18 %, H 0.56 %,
    // O 53.28 %; Al2O3 28.30 %, SiO2 66.70 %, H2O 5.00 %; total 100.00 %.
    // (The Handbook sheet, 2001 version 1.2, prints only an analysis.)
    EntryCheck {
        id: "pyrophyllite",
        reference: Reference::Page(Page {
            source: "Mineralogy Database, Pyrophyllite Mineral Data, Composition",
            formula: "Al2Si4O10(OH)2",
            molar_mass: 360.31,
            oxides: &[("Al2O3", 28.30), ("SiO2", 66.70), ("H2O", 5.00)],
            elements: &[("Al", 14.98), ("Si", 31.18), ("H", 0.56), ("O", 53.28)],
            total: 100.00,
        }),
    },
    // Paragonite: Mineralogy Database, "Paragonite Mineral Data"
    // (webmineral.com, Paragonite data page), Composition of
    // NaAl2(Si3Al)O10(OH)2: MW 382.20 gm; Na 6.02 %, Al 21.18 %,
    // Si 22.05 %, H 0.53 %, O 50.23 %; Na2O 8.11 %, Al2O3 40.02 %,
    // SiO2 47.16 %, H2O 4.71 %; total 100.00 %.
    EntryCheck {
        id: "paragonite",
        reference: Reference::Page(Page {
            source: "Mineralogy Database, Paragonite Mineral Data, Composition",
            formula: "NaAl2(Si3Al)O10(OH)2",
            molar_mass: 382.20,
            oxides: &[
                ("Na2O", 8.11),
                ("Al2O3", 40.02),
                ("SiO2", 47.16),
                ("H2O", 4.71),
            ],
            elements: &[
                ("Na", 6.02),
                ("Al", 21.18),
                ("Si", 22.05),
                ("H", 0.53),
                ("O", 50.23),
            ],
            total: 100.00,
        }),
    },
    // Hematite: Mineralogy Database, "Hematite Mineral Data"
    // (webmineral.com, Hematite data page), Composition of Fe2O3 (empirical
    // formula Fe3+2O3): MW 159.69 gm; Fe 69.94 %, O 30.06 %;
    // Fe2O3 100.00 %; total 100.00 %.
    EntryCheck {
        id: "hematite",
        reference: Reference::Page(Page {
            source: "Mineralogy Database, Hematite Mineral Data, Composition",
            formula: "Fe^3+2O3",
            molar_mass: 159.69,
            oxides: &[("Fe2O3", 100.00)],
            elements: &[("Fe", 69.94), ("O", 30.06)],
            total: 100.00,
        }),
    },
    // Brucite: National Gem Lab, "Brucite" (nationalgemlab.in/?p=2538),
    // Composition of Mg(OH)2: molecular weight 58.32 gm; Mg 41.68 %,
    // H 3.46 %, O 54.87 %; MgO 69.11 %, H2O 30.89 %; total 100.00 %.
    EntryCheck {
        id: "brucite",
        reference: Reference::Page(Page {
            source: "National Gem Lab, Brucite, Composition",
            formula: "Mg(OH)2",
            molar_mass: 58.32,
            oxides: &[("MgO", 69.11), ("H2O", 30.89)],
            elements: &[("Mg", 41.68), ("H", 3.46), ("O", 54.87)],
            total: 100.00,
        }),
    },
    // Lizardite: National Gem Lab, "Lizardite" (nationalgemlab.in/?p=24745),
    // Composition of Mg3Si2O5(OH)4: molecular weight 277.11 gm;
    // Mg 26.31 %, Si 20.27 %, H 1.45 %, O 51.96 %; MgO 43.63 %,
    // SiO2 43.36 %, H2O 13.00 %; total 100.00 %.
    EntryCheck {
        id: "lizardite",
        reference: Reference::Page(Page {
            source: "National Gem Lab, Lizardite, Composition",
            formula: "Mg3Si2O5(OH)4",
            molar_mass: 277.11,
            oxides: &[("MgO", 43.63), ("SiO2", 43.36), ("H2O", 13.00)],
            elements: &[("Mg", 26.31), ("Si", 20.27), ("H", 1.45), ("O", 51.96)],
            total: 100.00,
        }),
    },
];

/// Whether two formulae have the same atoms per formula unit, whatever the
/// grouping (the Handbook writes KAl2(Si3Al)O10(OH)2, our base
/// KAl2(AlSi3O10)(OH)2).
fn same_composition(a: &Formula, b: &Formula) -> bool {
    a.elements()
        .iter()
        .chain(b.elements())
        .all(|(element, _)| (a.count(*element) - b.count(*element)).abs() < 1e-9)
}

/// Compare a computed oxide composition with published lines and total.
fn compare_oxides(
    label: &str,
    ours: &OxideComposition,
    published: &[(&str, f64)],
    halogen_correction: f64,
    total: f64,
    failures: &mut Vec<String>,
) {
    for (name, value) in published {
        match ours.get(name) {
            Some(wt) if (wt - value).abs() <= TOLERANCE_WT_PERCENT => {}
            other => failures.push(format!(
                "{label}: {name} computed {other:?}, published {value}"
            )),
        }
    }
    for component in &ours.components {
        if !published.iter().any(|(name, _)| *name == component.name) {
            failures.push(format!(
                "{label}: computed {} {:.2} is not published",
                component.name, component.wt_percent
            ));
        }
    }
    if (ours.halogen_correction - halogen_correction).abs() > TOLERANCE_WT_PERCENT {
        failures.push(format!(
            "{label}: O ≡ F, Cl correction computed {:.3}, published {halogen_correction}",
            ours.halogen_correction
        ));
    }
    if (ours.total - total).abs() > TOLERANCE_WT_PERCENT {
        failures.push(format!(
            "{label}: total computed {:.3}, published {total}",
            ours.total
        ));
    }
}

#[test]
fn base_entries_match_published_ideal_compositions() {
    let base = basal::base::builtin();
    let mut failures = Vec::new();
    for check in ENTRY_CHECKS {
        let Some(entry) = base.entry(check.id) else {
            failures.push(format!("{}: not an entry of the base", check.id));
            continue;
        };
        let ours = Formula::parse(&entry.ideal_formula).unwrap_or_else(|e| {
            panic!(
                "{}: ideal formula {} does not parse: {e}",
                check.id, entry.ideal_formula
            )
        });
        let (label, formula, published) = match &check.reference {
            Reference::Handbook(title) => {
                let sheet = SHEETS
                    .iter()
                    .find(|s| s.sheet == *title)
                    .unwrap_or_else(|| panic!("{}: no sheet {title}", check.id));
                (
                    format!("{} vs Handbook {title}", check.id),
                    sheet.formula,
                    Published::Sheet(sheet),
                )
            }
            Reference::Page(page) => (
                format!("{} vs {}", check.id, page.source),
                page.formula,
                Published::Page(page),
            ),
        };
        let theirs = Formula::parse(formula)
            .unwrap_or_else(|e| panic!("{label}: {formula} does not parse: {e}"));
        if !same_composition(&ours, &theirs) {
            failures.push(format!(
                "{label}: our ideal formula {} is not the published {formula}",
                entry.ideal_formula
            ));
            continue;
        }
        match published {
            Published::Sheet(sheet) => match ours.oxide_weight_percent() {
                Ok(c) => compare_oxides(
                    &label,
                    &c,
                    sheet.oxides,
                    sheet.halogen_correction,
                    sheet.total,
                    &mut failures,
                ),
                Err(e) => failures.push(format!("{label}: {e}")),
            },
            Published::Page(page) => {
                if !page.oxides.is_empty() {
                    match ours.oxide_weight_percent() {
                        Ok(c) => {
                            compare_oxides(&label, &c, page.oxides, 0.0, page.total, &mut failures)
                        }
                        Err(e) => failures.push(format!("{label}: {e}")),
                    }
                }
                let fractions = ours.weight_fractions();
                for (symbol, value) in page.elements {
                    let element = Element::from_symbol(symbol)
                        .unwrap_or_else(|| panic!("{label}: unknown element {symbol}"));
                    let wt = fractions
                        .iter()
                        .find(|(e, _)| *e == element)
                        .map(|(_, w)| w * 100.0);
                    match wt {
                        Some(wt) if (wt - value).abs() <= TOLERANCE_WT_PERCENT => {}
                        other => failures.push(format!(
                            "{label}: {symbol} computed {other:?} wt %, published {value}"
                        )),
                    }
                }
                if fractions.len() != page.elements.len() {
                    failures.push(format!(
                        "{label}: {} elements computed, {} published",
                        fractions.len(),
                        page.elements.len()
                    ));
                }
                let mass = ours.molar_mass();
                if (mass - page.molar_mass).abs() > TOLERANCE_G_PER_MOL {
                    failures.push(format!(
                        "{label}: molar mass computed {mass:.3}, published {}",
                        page.molar_mass
                    ));
                }
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));

    // The issue asks for at least eight distinct entries of the base.
    let mut ids: Vec<&str> = ENTRY_CHECKS.iter().map(|c| c.id).collect();
    ids.sort_unstable();
    ids.dedup();
    assert_eq!(ids.len(), ENTRY_CHECKS.len(), "an entry is checked twice");
    assert!(ids.len() >= 8, "only {} entries checked", ids.len());
}
