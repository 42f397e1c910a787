//! Compositions computed from a parsed formula.
//!
//! Molar mass, element weight fractions, oxide weight percentages as a
//! mineral analyst reports them, bound water and charge balance. These are
//! what the property base checks its formulae against and what the service
//! shows beside a candidate mineral ("ideal composition: SiO2 45.26 wt %…").
//!
//! Oxides follow the oxidation state of each species (annotated, or the
//! element's default, see [`Element::default_oxidation`]): Fe²⁺ gives FeO,
//! Fe³⁺ gives Fe2O3, S⁶⁺ gives SO3, C⁴⁺ gives CO2 and all H is reported as
//! H2O. F and Cl are reported as elements, with the usual correction
//! "O ≡ F, Cl" (half an oxygen per halogen atom) subtracted so that the
//! total of a charge-balanced formula is 100.

use std::fmt;

use super::{Element, Formula};

/// One line of an oxide analysis: the oxide (or halogen) and its weight
/// percentage.
///
/// Why a name string: analysts read "Fe2O3" and "FeO", and an unusual state
/// (Mn³⁺, V⁵⁺) gets its oxide name built the same way ("Mn2O3", "V2O5").
#[derive(Debug, Clone, PartialEq)]
pub struct OxideComponent {
    /// Oxide formula as written in analyses ("SiO2", "Fe2O3"), or "F"/"Cl".
    pub name: String,
    /// Weight percent of the whole formula.
    pub wt_percent: f64,
}

/// The ideal composition of a formula in oxide weight percent.
///
/// Why a struct with a separate correction: published analyses list the
/// halogens as elements and then a "−O ≡ F, Cl" line before the total, and
/// comparing against them needs the same three parts.
#[derive(Debug, Clone, PartialEq)]
pub struct OxideComposition {
    /// Oxides and halogens in the conventional order of an analysis
    /// (SiO2, TiO2, Al2O3, Fe2O3, FeO, MnO, MgO, CaO, Na2O, K2O, …, H2O, F,
    /// Cl).
    pub components: Vec<OxideComponent>,
    /// The oxygen equivalent of F and Cl, as a positive weight percent to be
    /// subtracted (0 when there are no halogens).
    pub halogen_correction: f64,
    /// Sum of the components less the correction; 100 for a
    /// charge-balanced formula.
    pub total: f64,
}

impl OxideComposition {
    /// The weight percent of one component by name ("SiO2", "F"), if the
    /// formula has it.
    pub fn get(&self, name: &str) -> Option<f64> {
        self.components
            .iter()
            .find(|c| c.name == name)
            .map(|c| c.wt_percent)
    }
}

/// Why an oxide composition could not be computed.
///
/// Why an error rather than an empty list: a sulfide or a native element
/// really has no oxide analysis, and the caller must show element weight
/// fractions instead.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ChemError {
    /// The formula has no oxygen, or is a single element.
    #[error(
        "the formula is not oxygen-based (a sulfide, halide or native element), \
         so it has no oxide composition; use element weight fractions"
    )]
    NotOxygenBased,
    /// A species with no oxide: an anion other than O, F or Cl (sulfide S,
    /// ammonium N), or oxygen or a halogen in an unusual state.
    #[error("no oxide is reported for {element} in oxidation state {oxidation}")]
    UnsupportedSpecies {
        /// The element.
        element: Element,
        /// Its oxidation state in this formula.
        oxidation: i32,
    },
}

/// The sum of positive and of negative charges in one formula unit.
///
/// Why not just the residual: when a base entry fails to balance, the two
/// sums show whether cations are missing or anions are in excess.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChargeBalance {
    /// Sum of count × state over species with a positive state.
    pub cation_charge: f64,
    /// Sum of count × |state| over species with a negative state (positive
    /// number).
    pub anion_charge: f64,
    /// `cation_charge − anion_charge`; 0 for a neutral formula.
    pub residual: f64,
}

impl ChargeBalance {
    /// Whether the residual is within `tolerance` charges per formula unit
    /// (rounded compositions such as `Na0.33Al1.67…` need a little slack).
    pub fn is_balanced(&self, tolerance: f64) -> bool {
        self.residual.abs() <= tolerance
    }
}

impl fmt::Display for ChargeBalance {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "cations +{:.3}, anions −{:.3}, residual {:+.3}",
            self.cation_charge, self.anion_charge, self.residual
        )
    }
}

/// The conventional order of components in a silicate analysis; names not
/// listed go just before P2O5.
const ANALYSIS_ORDER: [&str; 30] = [
    "SiO2", "TiO2", "ZrO2", "B2O3", "Al2O3", "V2O3", "Cr2O3", "Fe2O3", "FeO", "MnO", "NiO", "CoO",
    "CuO", "ZnO", "MgO", "CaO", "SrO", "BaO", "PbO", "Li2O", "Na2O", "K2O", "Rb2O", "Cs2O", "P2O5",
    "CO2", "SO3", "H2O", "F", "Cl",
];

fn analysis_rank(name: &str) -> usize {
    ANALYSIS_ORDER.iter().position(|n| *n == name).unwrap_or(24) // just before P2O5
}

/// Cations and oxygens in the oxide of an element in a positive state:
/// M2O for +1, MO for +2, M2O3 for +3, MO2 for +4, and so on.
fn oxide_stoichiometry(state: i32) -> (i32, i32) {
    if state % 2 == 0 {
        (1, state / 2)
    } else {
        (2, state)
    }
}

fn oxide_name(element: Element, cations: i32, oxygens: i32) -> String {
    let mut name = String::from(element.symbol());
    if cations > 1 {
        name.push_str(&cations.to_string());
    }
    name.push('O');
    if oxygens > 1 {
        name.push_str(&oxygens.to_string());
    }
    name
}

impl Formula {
    /// Molar mass in g/mol, from the IUPAC 2021 weights of
    /// [`Element::atomic_weight`].
    pub fn molar_mass(&self) -> f64 {
        self.elements()
            .iter()
            .map(|(e, n)| n * e.atomic_weight())
            .sum()
    }

    /// Mass fraction (0 to 1) of each element, in order of first appearance;
    /// the composition to show for sulfides and native elements.
    pub fn weight_fractions(&self) -> Vec<(Element, f64)> {
        let mass = self.molar_mass();
        self.elements()
            .iter()
            .map(|(e, n)| (*e, n * e.atomic_weight() / mass))
            .collect()
    }

    /// Weight percent of water that heating would drive off if all hydrogen
    /// (in OH and in H2O) left as H2O: the ideal "H2O" line of an analysis
    /// and a quick check against a loss-on-ignition. 0 without hydrogen.
    pub fn bound_water_wt_percent(&self) -> f64 {
        let water = 2.0 * Element::H.atomic_weight() + Element::O.atomic_weight();
        self.count(Element::H) / 2.0 * water / self.molar_mass() * 100.0
    }

    /// The ideal oxide composition, as a mineral analyst reports it; see the
    /// module documentation for the conventions.
    ///
    /// Fails for formulae without oxygen (sulfides such as MoS2, native
    /// elements such as C) and for species with no oxide (sulfide S or
    /// ammonium N inside an oxygen-bearing formula).
    pub fn oxide_weight_percent(&self) -> Result<OxideComposition, ChemError> {
        if !self.contains(Element::O) || self.is_single_element() {
            return Err(ChemError::NotOxygenBased);
        }
        let mass = self.molar_mass();
        let oxygen = Element::O.atomic_weight();
        // (rank, atomic number, line)
        let mut lines: Vec<(usize, u8, OxideComponent)> = Vec::new();
        let mut add = |element: Element, name: String, wt: f64| match lines
            .iter_mut()
            .find(|(_, _, line)| line.name == name)
        {
            Some((_, _, line)) => line.wt_percent += wt,
            None => lines.push((
                analysis_rank(&name),
                element.atomic_number(),
                OxideComponent {
                    name,
                    wt_percent: wt,
                },
            )),
        };
        let mut halogen_oxygen = 0.0;
        for species in self.species() {
            let element = species.element;
            let state = self.state_of(species);
            let unsupported = ChemError::UnsupportedSpecies {
                element,
                oxidation: state,
            };
            match element {
                Element::O if state == -2 => {}
                Element::F | Element::Cl if state == -1 => {
                    let wt = species.count * element.atomic_weight() / mass * 100.0;
                    add(element, element.symbol().to_string(), wt);
                    halogen_oxygen += species.count / 2.0;
                }
                _ if state > 0 => {
                    let (cations, oxygens) = oxide_stoichiometry(state);
                    let oxide_mass =
                        f64::from(cations) * element.atomic_weight() + f64::from(oxygens) * oxygen;
                    let wt = species.count / f64::from(cations) * oxide_mass / mass * 100.0;
                    add(element, oxide_name(element, cations, oxygens), wt);
                }
                _ => return Err(unsupported),
            }
        }
        lines.sort_by_key(|(rank, z, _)| (*rank, *z));
        let components: Vec<OxideComponent> = lines.into_iter().map(|(_, _, line)| line).collect();
        let halogen_correction = halogen_oxygen * oxygen / mass * 100.0;
        let total = components.iter().map(|c| c.wt_percent).sum::<f64>() - halogen_correction;
        Ok(OxideComposition {
            components,
            halogen_correction,
            total,
        })
    }

    /// Positive and negative charges per formula unit from the oxidation
    /// state of every species (annotated or default); a native element is
    /// neutral.
    pub fn charge_balance(&self) -> ChargeBalance {
        let mut cation_charge = 0.0;
        let mut anion_charge = 0.0;
        for species in self.species() {
            let charge = f64::from(self.state_of(species)) * species.count;
            if charge > 0.0 {
                cation_charge += charge;
            } else {
                anion_charge -= charge;
            }
        }
        ChargeBalance {
            cation_charge,
            anion_charge,
            residual: cation_charge - anion_charge,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(s: &str) -> Formula {
        match Formula::parse(s) {
            Ok(f) => f,
            Err(e) => panic!("{s:?} should parse: {e}"),
        }
    }

    fn oxides(s: &str) -> OxideComposition {
        match parse(s).oxide_weight_percent() {
            Ok(o) => o,
            Err(e) => panic!("{s}: {e}"),
        }
    }

    fn close(a: f64, b: f64, tolerance: f64) -> bool {
        (a - b).abs() <= tolerance
    }

    #[test]
    fn molar_mass_is_the_sum_of_iupac_weights() {
        // Muscovite, by hand from CIAAW 2021 weights:
        // K 39.0983 + 3 Al 26.9815384 + 3 Si 28.085 + 12 O 15.999 + 2 H 1.008.
        let expected = 39.0983 + 3.0 * 26.981_538_4 + 3.0 * 28.085 + 12.0 * 15.999 + 2.0 * 1.008;
        assert!(close(
            parse("KAl2(AlSi3O10)(OH)2").molar_mass(),
            expected,
            1e-9
        ));
        assert!(close(parse("H2O").molar_mass(), 18.015, 1e-9));
    }

    #[test]
    fn molar_masses_match_published_values() {
        // Molar masses computed by the molmass library, 2026.1.8 (PyPI),
        // `molmass.Formula(f).mass`, rounded to 0.01 g/mol: 379.266, 172.171,
        // 360.314, 78.004, 159.688, 382.200. Its atomic weights lie inside
        // the same CIAAW intervals as ours (O 15.999405), hence 0.02 g/mol slack.
        let published = [
            ("Mg3Si4O10(OH)2", 379.27),
            ("CaSO4·2H2O", 172.17),
            ("Al2Si4O10(OH)2", 360.31),
            ("Al(OH)3", 78.00),
            ("Fe³⁺2O3", 159.69),
            ("NaAl2(AlSi3O10)(OH)2", 382.20),
        ];
        for (formula, mass) in published {
            let got = parse(formula).molar_mass();
            assert!(close(got, mass, 0.02), "{formula}: {got} vs {mass}");
        }
    }

    #[test]
    fn weight_fractions_sum_to_one() {
        for s in ["MoS2", "C", "KAl2(AlSi3O10)(OH)2", "KCa4Si8O20F·8H2O"] {
            let total: f64 = parse(s).weight_fractions().iter().map(|(_, w)| w).sum();
            assert!(close(total, 1.0, 1e-12), "{s}");
        }
        let molybdenite = parse("MoS2").weight_fractions();
        // Mo 59.94 %, S 40.06 % (molmass 2026.1.8: Mo 59.939 %, S 40.061 %).
        assert!(close(molybdenite[0].1 * 100.0, 59.94, 0.01));
        assert!(close(molybdenite[1].1 * 100.0, 40.06, 0.01));
        assert_eq!(parse("C").weight_fractions(), vec![(Element::C, 1.0)]);
    }

    #[test]
    fn bound_water() {
        // Brucite Mg(OH)2: H2O 30.89 wt % (molmass 2026.1.8: H2O/Mg(OH)2 =
        // 30.891 %; tests/data/reference_compositions.json).
        assert!(close(
            parse("Mg(OH)2").bound_water_wt_percent(),
            30.89,
            0.01
        ));
        assert_eq!(parse("Fe^3+2O3").bound_water_wt_percent(), 0.0);
        let gypsum = parse("CaSO4·2H2O");
        let from_oxides = oxides("CaSO4·2H2O").get("H2O");
        assert!(from_oxides.is_some_and(|w| close(w, gypsum.bound_water_wt_percent(), 1e-12)));
    }

    #[test]
    fn required_formulae_balance() {
        for s in [
            "KAl2(AlSi3O10)(OH)2",
            "Mg3Si4O10(OH)2",
            "(Mg5Al)(AlSi3O10)(OH)8",
            "Al2Si2O5(OH)4",
            "Mg3Si2O5(OH)4",
            "CaSO4·2H2O",
            "Mg(OH)2",
            "MoS2",
            "C",
            "Fe³⁺2O3",
            "KCa4Si8O20F·8H2O",
            "Na0.33Al1.67Mg0.33Si4O10(OH)2·4H2O",
            "CaCO3",
            "CaMoO4",
            "Fe^2+Fe^3+2O4",
            "NH4Cl",
        ] {
            let balance = parse(s).charge_balance();
            assert!(balance.is_balanced(1e-9), "{s}: {balance}");
        }
    }

    #[test]
    fn unbalanced_formulae_are_caught() {
        let balance = parse("KAl3(AlSi3O10)(OH)2").charge_balance();
        assert!(!balance.is_balanced(0.01));
        assert!(close(balance.residual, 3.0, 1e-9));
        assert!(close(balance.cation_charge, 27.0, 1e-9));
        assert!(close(balance.anion_charge, 24.0, 1e-9));
        // Unannotated Fe is Fe2+, so Fe2O3 does not balance without Fe³⁺.
        assert!(close(parse("Fe2O3").charge_balance().residual, -2.0, 1e-9));
    }

    #[test]
    fn native_elements_are_neutral() {
        for s in ["C", "S", "Cu", "Fe"] {
            let b = parse(s).charge_balance();
            assert_eq!(
                (b.cation_charge, b.anion_charge, b.residual),
                (0.0, 0.0, 0.0)
            );
        }
    }

    #[test]
    fn iron_oxides_follow_the_oxidation_state() {
        let hematite = oxides("Fe³⁺2O3");
        assert_eq!(hematite.components.len(), 1);
        assert!(hematite.get("Fe2O3").is_some_and(|w| close(w, 100.0, 1e-9)));
        let wustite = oxides("FeO");
        assert!(wustite.get("FeO").is_some_and(|w| close(w, 100.0, 1e-9)));
        let magnetite = oxides("Fe^2+Fe^3+2O4");
        let names: Vec<_> = magnetite
            .components
            .iter()
            .map(|c| c.name.as_str())
            .collect();
        assert_eq!(names, vec!["Fe2O3", "FeO"]);
        assert!(close(magnetite.total, 100.0, 1e-9));
    }

    #[test]
    fn oxides_are_in_analysis_order_and_total_100() {
        let composition = oxides("KAl2(AlSi3O10)(OH)2");
        let names: Vec<_> = composition
            .components
            .iter()
            .map(|c| c.name.as_str())
            .collect();
        assert_eq!(names, vec!["SiO2", "Al2O3", "K2O", "H2O"]);
        assert!(close(composition.total, 100.0, 1e-9));
        assert_eq!(composition.halogen_correction, 0.0);
        // Sulfate and carbonate.
        assert!(oxides("CaSO4").get("SO3").is_some());
        let calcite = oxides("CaCO3");
        // CaO 56.03, CO2 43.97 (molmass 2026.1.8: CaO/CaCO3 = 56.029 %,
        // CO2/CaCO3 = 43.971 %).
        assert!(calcite.get("CaO").is_some_and(|w| close(w, 56.03, 0.01)));
        assert!(calcite.get("CO2").is_some_and(|w| close(w, 43.97, 0.01)));
        // Unusual states get their oxide name built the same way.
        assert!(oxides("Mn^3+2O3").get("Mn2O3").is_some());
        assert!(oxides("CaMoO4").get("MoO3").is_some());
    }

    #[test]
    fn halogens_get_the_oxygen_correction() {
        let apophyllite = oxides("KCa4Si8O20F·8H2O");
        let f = apophyllite.get("F").unwrap_or(0.0);
        let expected = f * (Element::O.atomic_weight() / 2.0) / Element::F.atomic_weight();
        assert!(close(apophyllite.halogen_correction, expected, 1e-12));
        assert!(close(apophyllite.total, 100.0, 1e-9));
        let chlorapatite = oxides("Ca5(PO4)3Cl");
        assert!(chlorapatite.get("Cl").is_some());
        assert!(chlorapatite.get("P2O5").is_some());
        assert!(close(chlorapatite.total, 100.0, 1e-9));
    }

    #[test]
    fn unbalanced_formula_totals_are_not_100() {
        let o = oxides("KAl3(AlSi3O10)(OH)2");
        assert!(o.total > 100.5, "{}", o.total);
    }

    #[test]
    fn non_oxygen_formulae_have_no_oxides() {
        assert_eq!(
            parse("MoS2").oxide_weight_percent(),
            Err(ChemError::NotOxygenBased)
        );
        assert_eq!(
            parse("C").oxide_weight_percent(),
            Err(ChemError::NotOxygenBased)
        );
        assert_eq!(
            parse("O2").oxide_weight_percent(),
            Err(ChemError::NotOxygenBased)
        );
        assert_eq!(
            parse("NH4Al(SO4)2").oxide_weight_percent(),
            Err(ChemError::UnsupportedSpecies {
                element: Element::N,
                oxidation: -3
            })
        );
        let e = parse("MoS2").oxide_weight_percent().err();
        assert!(e.is_some_and(|e| e.to_string().contains("not oxygen-based")));
    }
}
