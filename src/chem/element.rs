//! Chemical elements and their standard atomic weights.
//!
//! The crate only needs the elements that occur in the minerals a field
//! geologist meets among sheet silicates and their lookalikes, so the table
//! is short and every value can be checked by eye against its source.
//!
//! Source of every weight below: IUPAC Commission on Isotopic Abundances and
//! Atomic Weights (CIAAW), *Standard Atomic Weights 2021* (table at
//! ciaaw.org, published as Prohaska et al., "Standard atomic weights of the
//! elements 2021 (IUPAC Technical Report)", Pure Appl. Chem. 94 (2022)
//! 573–600). Elements whose standard weight is an interval carry the IUPAC
//! *conventional* value of that report (H 1.008, Li 6.94, B 10.81, C 12.011,
//! N 14.007, O 15.999, Mg 24.305, Si 28.085, S 32.06, Cl 35.45, Pb 207.2) for
//! calculations.

use std::fmt;

/// A chemical element that may appear in a mineral formula.
///
/// Why an enum rather than a string: every later step (weights, oxide
/// conversion, default oxidation states) can then match exhaustively, and a
/// formula that parsed can never hold an element the tables do not know.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize, serde::Deserialize,
)]
pub enum Element {
    /// Hydrogen.
    H,
    /// Lithium.
    Li,
    /// Beryllium.
    Be,
    /// Boron.
    B,
    /// Carbon.
    C,
    /// Nitrogen.
    N,
    /// Oxygen.
    O,
    /// Fluorine.
    F,
    /// Sodium.
    Na,
    /// Magnesium.
    Mg,
    /// Aluminium.
    Al,
    /// Silicon.
    Si,
    /// Phosphorus.
    P,
    /// Sulfur.
    S,
    /// Chlorine.
    Cl,
    /// Potassium.
    K,
    /// Calcium.
    Ca,
    /// Titanium.
    Ti,
    /// Vanadium.
    V,
    /// Chromium.
    Cr,
    /// Manganese.
    Mn,
    /// Iron.
    Fe,
    /// Cobalt.
    Co,
    /// Nickel.
    Ni,
    /// Copper.
    Cu,
    /// Zinc.
    Zn,
    /// Rubidium.
    Rb,
    /// Strontium.
    Sr,
    /// Zirconium.
    Zr,
    /// Molybdenum.
    Mo,
    /// Caesium.
    Cs,
    /// Barium.
    Ba,
    /// Lead.
    Pb,
}

/// A standard atomic weight as CIAAW states it.
///
/// Why two shapes: for elements whose isotopic make-up varies in nature
/// (H, C, O, Mg, Si, S, Pb, …) CIAAW gives an interval, not a value with an
/// uncertainty, and a caller comparing weights must know which it holds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StandardAtomicWeight {
    /// The weight of normal materials lies in `[low, high]`; `conventional`
    /// is the single value IUPAC recommends for calculations.
    Interval {
        /// Lower bound of the interval.
        low: f64,
        /// Upper bound of the interval.
        high: f64,
        /// IUPAC conventional value, used for every calculation here.
        conventional: f64,
    },
    /// A value with its standard uncertainty (the figure in parentheses).
    Value {
        /// The standard atomic weight.
        value: f64,
        /// Its uncertainty, in the same units.
        uncertainty: f64,
    },
}

impl StandardAtomicWeight {
    /// The single value used in calculations (the conventional value for an
    /// interval), so callers need not match on the shape.
    pub fn value(&self) -> f64 {
        match *self {
            StandardAtomicWeight::Interval { conventional, .. } => conventional,
            StandardAtomicWeight::Value { value, .. } => value,
        }
    }

    /// How far the true weight of a normal sample may lie from
    /// [`value`](Self::value): the stated uncertainty, or for an interval the
    /// larger distance from the conventional value to either end.
    pub fn uncertainty(&self) -> f64 {
        match *self {
            StandardAtomicWeight::Interval {
                low,
                high,
                conventional,
            } => (conventional - low).max(high - conventional),
            StandardAtomicWeight::Value { uncertainty, .. } => uncertainty,
        }
    }
}

/// One row of the element table.
struct ElementData {
    element: Element,
    symbol: &'static str,
    name: &'static str,
    atomic_number: u8,
    weight: StandardAtomicWeight,
}

const fn interval(low: f64, high: f64, conventional: f64) -> StandardAtomicWeight {
    StandardAtomicWeight::Interval {
        low,
        high,
        conventional,
    }
}

const fn value(value: f64, uncertainty: f64) -> StandardAtomicWeight {
    StandardAtomicWeight::Value { value, uncertainty }
}

const fn row(
    element: Element,
    symbol: &'static str,
    name: &'static str,
    atomic_number: u8,
    weight: StandardAtomicWeight,
) -> ElementData {
    ElementData {
        element,
        symbol,
        name,
        atomic_number,
        weight,
    }
}

/// The element table, in the order of the [`Element`] variants.
///
/// Source: CIAAW, Standard Atomic Weights 2021 (ciaaw.org table; Prohaska et
/// al., Pure Appl. Chem. 94 (2022) 573–600). Pb is the 2021 interval
/// [206.14, 207.94] with conventional value 207.2 (changed from 207.2(1) in
/// that report). The Cs and Ba rows were not visible in the part of the table
/// consulted and are written from memory of it (both unchanged since 2013);
/// the `chem_handbook` test checks them against the `mendeleev` crate.
const TABLE: [ElementData; 33] = [
    row(
        Element::H,
        "H",
        "hydrogen",
        1,
        interval(1.00784, 1.00811, 1.008),
    ),
    row(
        Element::Li,
        "Li",
        "lithium",
        3,
        interval(6.938, 6.997, 6.94),
    ),
    row(
        Element::Be,
        "Be",
        "beryllium",
        4,
        value(9.012_183_1, 0.000_000_5),
    ),
    row(Element::B, "B", "boron", 5, interval(10.806, 10.821, 10.81)),
    row(
        Element::C,
        "C",
        "carbon",
        6,
        interval(12.0096, 12.0116, 12.011),
    ),
    row(
        Element::N,
        "N",
        "nitrogen",
        7,
        interval(14.00643, 14.00728, 14.007),
    ),
    row(
        Element::O,
        "O",
        "oxygen",
        8,
        interval(15.99903, 15.99977, 15.999),
    ),
    row(
        Element::F,
        "F",
        "fluorine",
        9,
        value(18.998_403_162, 0.000_000_005),
    ),
    row(
        Element::Na,
        "Na",
        "sodium",
        11,
        value(22.989_769_28, 0.000_000_02),
    ),
    row(
        Element::Mg,
        "Mg",
        "magnesium",
        12,
        interval(24.304, 24.307, 24.305),
    ),
    row(
        Element::Al,
        "Al",
        "aluminium",
        13,
        value(26.981_538_4, 0.000_000_3),
    ),
    row(
        Element::Si,
        "Si",
        "silicon",
        14,
        interval(28.084, 28.086, 28.085),
    ),
    row(
        Element::P,
        "P",
        "phosphorus",
        15,
        value(30.973_761_998, 0.000_000_005),
    ),
    row(
        Element::S,
        "S",
        "sulfur",
        16,
        interval(32.059, 32.076, 32.06),
    ),
    row(
        Element::Cl,
        "Cl",
        "chlorine",
        17,
        interval(35.446, 35.457, 35.45),
    ),
    row(Element::K, "K", "potassium", 19, value(39.0983, 0.0001)),
    row(Element::Ca, "Ca", "calcium", 20, value(40.078, 0.004)),
    row(Element::Ti, "Ti", "titanium", 22, value(47.867, 0.001)),
    row(Element::V, "V", "vanadium", 23, value(50.9415, 0.0001)),
    row(Element::Cr, "Cr", "chromium", 24, value(51.9961, 0.0006)),
    row(
        Element::Mn,
        "Mn",
        "manganese",
        25,
        value(54.938_043, 0.000_002),
    ),
    row(Element::Fe, "Fe", "iron", 26, value(55.845, 0.002)),
    row(
        Element::Co,
        "Co",
        "cobalt",
        27,
        value(58.933_194, 0.000_003),
    ),
    row(Element::Ni, "Ni", "nickel", 28, value(58.6934, 0.0004)),
    row(Element::Cu, "Cu", "copper", 29, value(63.546, 0.003)),
    row(Element::Zn, "Zn", "zinc", 30, value(65.38, 0.02)),
    row(Element::Rb, "Rb", "rubidium", 37, value(85.4678, 0.0003)),
    row(Element::Sr, "Sr", "strontium", 38, value(87.62, 0.01)),
    row(Element::Zr, "Zr", "zirconium", 40, value(91.224, 0.002)),
    row(Element::Mo, "Mo", "molybdenum", 42, value(95.95, 0.01)),
    row(
        Element::Cs,
        "Cs",
        "caesium",
        55,
        value(132.905_451_96, 0.000_000_06),
    ),
    row(Element::Ba, "Ba", "barium", 56, value(137.327, 0.007)),
    row(
        Element::Pb,
        "Pb",
        "lead",
        82,
        interval(206.14, 207.94, 207.2),
    ),
];

impl Element {
    /// Every element the crate knows, in table order (roughly by atomic
    /// number), so tests and user interfaces can list them.
    pub const ALL: [Element; 33] = [
        Element::H,
        Element::Li,
        Element::Be,
        Element::B,
        Element::C,
        Element::N,
        Element::O,
        Element::F,
        Element::Na,
        Element::Mg,
        Element::Al,
        Element::Si,
        Element::P,
        Element::S,
        Element::Cl,
        Element::K,
        Element::Ca,
        Element::Ti,
        Element::V,
        Element::Cr,
        Element::Mn,
        Element::Fe,
        Element::Co,
        Element::Ni,
        Element::Cu,
        Element::Zn,
        Element::Rb,
        Element::Sr,
        Element::Zr,
        Element::Mo,
        Element::Cs,
        Element::Ba,
        Element::Pb,
    ];

    fn data(self) -> &'static ElementData {
        // The variants are declared in table order, so the discriminant is
        // the row index (checked by a unit test).
        &TABLE[self as usize]
    }

    /// The element symbol as written in formulae ("Fe"), for display and
    /// for round-tripping through [`from_symbol`](Self::from_symbol).
    pub fn symbol(self) -> &'static str {
        self.data().symbol
    }

    /// The English element name ("iron"), for explanations shown to users.
    pub fn name(self) -> &'static str {
        self.data().name
    }

    /// The atomic number, so elements can be ordered as a chemist expects.
    pub fn atomic_number(self) -> u8 {
        self.data().atomic_number
    }

    /// Looks an element up by its exact, case-sensitive symbol ("Co" is
    /// cobalt, "CO" is not a symbol); `None` for anything unknown.
    pub fn from_symbol(symbol: &str) -> Option<Element> {
        TABLE
            .iter()
            .find(|row| row.symbol == symbol)
            .map(|row| row.element)
    }

    /// The IUPAC 2021 standard atomic weight in the form CIAAW gives it
    /// (interval or value with uncertainty).
    pub fn standard_atomic_weight(self) -> StandardAtomicWeight {
        self.data().weight
    }

    /// The atomic weight used for molar masses: the CIAAW 2021 standard
    /// value, or the IUPAC conventional value where the standard weight is an
    /// interval (H 1.008, O 15.999, …).
    pub fn atomic_weight(self) -> f64 {
        self.data().weight.value()
    }

    /// How far a natural sample's atomic weight may lie from
    /// [`atomic_weight`](Self::atomic_weight); see
    /// [`StandardAtomicWeight::uncertainty`].
    pub fn atomic_weight_uncertainty(self) -> f64 {
        self.data().weight.uncertainty()
    }

    /// The oxidation state this element takes in a mineral formula when
    /// none is written, so that ideal formulae need annotating only where
    /// the usual state does not hold (Fe³⁺ in hematite).
    ///
    /// `with_oxygen` tells whether the formula contains oxygen, which decides
    /// the elements with two common states. The choices (common practice in
    /// mineral formula recalculation):
    ///
    /// - +1: H, Li, Na, K, Rb, Cs
    /// - +2: Be, Mg, Ca, Sr, Ba, Mn, Fe, Co, Ni, Cu, Zn, Pb
    /// - +3: B, Al, V, Cr
    /// - +4: C, Si, Ti, Zr
    /// - +5: P
    /// - Mo: +6 with oxygen (molybdates such as powellite CaMoO4), +4 without
    ///   (molybdenite MoS2)
    /// - S: +6 with oxygen (sulfates such as gypsum), −2 without (sulfides)
    /// - N: −3, as ammonium (NH4) in micas and feldspars; write `N^5+` for a
    ///   nitrate
    /// - O −2, F −1, Cl −1
    ///
    /// A formula made of one element only (graphite `C`) is treated as
    /// neutral by [`Formula`](super::Formula), whatever this returns.
    pub fn default_oxidation(self, with_oxygen: bool) -> i32 {
        use Element::*;
        match self {
            H | Li | Na | K | Rb | Cs => 1,
            Be | Mg | Ca | Sr | Ba | Mn | Fe | Co | Ni | Cu | Zn | Pb => 2,
            B | Al | V | Cr => 3,
            C | Si | Ti | Zr => 4,
            P => 5,
            Mo if with_oxygen => 6,
            Mo => 4,
            S if with_oxygen => 6,
            S => -2,
            N => -3,
            O => -2,
            F | Cl => -1,
        }
    }
}

impl fmt::Display for Element {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_rows_follow_variant_order() {
        for (index, element) in Element::ALL.iter().enumerate() {
            assert_eq!(TABLE[index].element, *element);
            assert_eq!(*element as usize, index);
        }
    }

    #[test]
    fn symbols_round_trip_and_are_unique() {
        for element in Element::ALL {
            assert_eq!(Element::from_symbol(element.symbol()), Some(element));
        }
        let mut symbols: Vec<_> = Element::ALL.iter().map(|e| e.symbol()).collect();
        symbols.sort_unstable();
        symbols.dedup();
        assert_eq!(symbols.len(), Element::ALL.len());
    }

    #[test]
    fn from_symbol_is_case_sensitive() {
        assert_eq!(Element::from_symbol("Co"), Some(Element::Co));
        assert_eq!(Element::from_symbol("CO"), None);
        assert_eq!(Element::from_symbol("co"), None);
        assert_eq!(Element::from_symbol(""), None);
        assert_eq!(Element::from_symbol("Xx"), None);
    }

    #[test]
    fn atomic_numbers_increase_along_the_table() {
        for pair in Element::ALL.windows(2) {
            assert!(pair[0].atomic_number() < pair[1].atomic_number());
        }
    }

    #[test]
    fn conventional_values_for_interval_elements() {
        // IUPAC conventional values, CIAAW Standard Atomic Weights 2021.
        let expected = [
            (Element::H, 1.008),
            (Element::Li, 6.94),
            (Element::B, 10.81),
            (Element::C, 12.011),
            (Element::N, 14.007),
            (Element::O, 15.999),
            (Element::Mg, 24.305),
            (Element::Si, 28.085),
            (Element::S, 32.06),
            (Element::Cl, 35.45),
            (Element::Pb, 207.2),
        ];
        for (element, weight) in expected {
            assert_eq!(element.atomic_weight(), weight, "{element}");
            assert!(matches!(
                element.standard_atomic_weight(),
                StandardAtomicWeight::Interval { .. }
            ));
        }
    }

    #[test]
    fn intervals_hold_their_conventional_value_to_rounding() {
        // The conventional value is rounded, so it may fall just outside the
        // interval: O 15.999 against [15.99903, 15.99977] (CIAAW 2021).
        for element in Element::ALL {
            if let StandardAtomicWeight::Interval {
                low,
                high,
                conventional,
            } = element.standard_atomic_weight()
            {
                assert!(
                    low - 0.0005 <= conventional && conventional <= high + 0.0005,
                    "{element}"
                );
            }
            assert!(element.atomic_weight_uncertainty() > 0.0, "{element}");
        }
    }

    #[test]
    fn uncertainty_of_an_interval_is_the_larger_half() {
        // H: [1.00784, 1.00811], conventional 1.008 (CIAAW 2021).
        let u = Element::H.atomic_weight_uncertainty();
        assert!((u - 0.00016).abs() < 1e-12);
        // Fe: 55.845(2) (CIAAW 2021).
        assert_eq!(Element::Fe.atomic_weight_uncertainty(), 0.002);
    }
}
