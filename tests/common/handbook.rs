//! Figures read once from Handbook of Mineralogy data sheets, cited once,
//! and shared by the test binaries that need them (`#[path]`-included, so
//! this file is not a test target of its own).
//!
//! Anthony, J. W., Bideaux, R. A., Bladh, K. W. & Nichols, M. C. (eds.),
//! Handbook of Mineralogy, Mineral Data Publishing / Mineralogical Society
//! of America.

/// What one data sheet prints under "Physical Properties".
pub struct SheetFigures {
    /// Which sheet, and how its figures were seen.
    pub citation: &'static str,
    /// "Hardness =", Mohs (a single figure on this sheet).
    pub hardness: f64,
    /// "D(meas.) =", g/cm³, as a range.
    pub density_measured: [f64; 2],
}

/// Muscovite: Hardness = 2.5, D(meas.) = 2.77–2.88. Seen as the sheet's
/// figures transcribed field by field with attribution to the Handbook
/// (2001); the base's muscovite entry cites the same sheet.
pub const MUSCOVITE: SheetFigures = SheetFigures {
    citation: "Handbook of Mineralogy, muscovite data sheet (2001, version 1.2)",
    hardness: 2.5,
    density_measured: [2.77, 2.88],
};

/// The base's rule for a sheet that gives one hardness figure: the range is
/// that figure ± 0.5 for the scatter of scratch tests (src/base/base.toml,
/// "Conventions"; common practice).
pub const SINGLE_FIGURE_HARDNESS_HALF_WIDTH: f64 = 0.5;
