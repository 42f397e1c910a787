//! Chemistry: formula parsing, atomic weights and compositions.
//!
//! The property base states each mineral's ideal formula; this module turns
//! such a formula into what a geologist or a validator needs from it: the
//! atoms per formula unit ([`Formula::parse`]), the molar mass and element
//! weight fractions, the oxide weight percentages an analyst would report
//! ([`Formula::oxide_weight_percent`]), the bound water and the charge
//! balance ([`Formula::charge_balance`]).
//!
//! Atomic weights are the IUPAC/CIAAW 2021 standard atomic weights (see
//! [`Element::atomic_weight`]). The module is pure: no I/O and no state.
//!
//! ```
//! use basal::chem::Formula;
//!
//! let muscovite = Formula::parse("KAl2(AlSi3O10)(OH)2")?;
//! assert!(muscovite.charge_balance().is_balanced(1e-9));
//! let oxides = muscovite.oxide_weight_percent()?;
//! assert!((oxides.get("K2O").unwrap_or(0.0) - 11.82).abs() < 0.05);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

mod composition;
mod element;
mod formula;

pub use composition::{ChargeBalance, ChemError, OxideComponent, OxideComposition};
pub use element::{Element, StandardAtomicWeight};
pub use formula::{Formula, FormulaError, FormulaErrorKind, Species};
