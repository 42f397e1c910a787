//! The curated property base: every entry the engine can name, with the
//! published source of each value.
//!
//! The base is data, not code. `src/base/base.toml` is a reviewed file
//! compiled into the binary; [`builtin`] parses and validates it once.
//! [`Base::validate`] is the reviewer that never tires: unknown enum values,
//! disordered ranges, formulae that do not parse or do not balance, and
//! values without a source all fail it (and so fail the test suite).

pub mod vocab;

use std::collections::{BTreeMap, BTreeSet};
use std::sync::LazyLock;

use serde::{Deserialize, Serialize};

use crate::chem::Formula;
use vocab::{
    Cleavage, Colour, Diaphaneity, Feel, Group, Habit, Hazard, Luster, Setting, Streak, Tenacity,
    Vocab, WetBehaviour,
};

/// The text of the property base, as reviewed.
pub const BASE_TOML: &str = include_str!("base/base.toml");

/// Entry ids the contract promises the base holds.
pub const REQUIRED_IDS: &[&str] = &[
    "muscovite",
    "paragonite",
    "phlogopite",
    "biotite",
    "lepidolite",
    "glauconite",
    "margarite",
    "chlorite",
    "talc",
    "pyrophyllite",
    "antigorite",
    "lizardite",
    "chrysotile",
    "kaolinite",
    "smectite",
    "illite",
    "vermiculite",
    "stilpnomelane",
    "apophyllite",
    "sepiolite",
    "graphite",
    "molybdenite",
    "gypsum",
    "hematite",
    "brucite",
    "chloritoid",
];

/// Properties every entry must name a source for.
pub const SOURCED_PROPERTIES: &[&str] = &[
    "formula",
    "cleavage",
    "tenacity",
    "hardness",
    "specific_gravity",
    "colour",
    "luster",
    "habit",
    "feel",
    "wet_behaviour",
    "streak",
    "diaphaneity",
    "magnetic",
    "acid_reaction",
    "setting",
    "prior",
];

/// How much weight a source carries, as the rules of origin require us to say.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SourceKind {
    /// A published handbook or paper.
    Handbook,
    /// A rule of thumb of field practice.
    CommonPractice,
    /// Recalled without a source at hand.
    FromMemory,
}

/// A named source that entries cite by key.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Source {
    /// Handbook, common practice or from memory.
    pub kind: SourceKind,
    /// The full citation, or a plain description for practice and memory.
    pub citation: String,
}

/// The values of one categorical property for one entry.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Values<T> {
    /// What most hand specimens show.
    pub typical: Vec<T>,
    /// What a fair fraction of specimens show.
    #[serde(default = "Vec::new")]
    pub occasional: Vec<T>,
}

impl<T: PartialEq> Values<T> {
    /// Whether `v` is listed as typical.
    pub fn is_typical(&self, v: &T) -> bool {
        self.typical.contains(v)
    }
    /// Whether `v` is listed as occasional.
    pub fn is_occasional(&self, v: &T) -> bool {
        self.occasional.contains(v)
    }
}

/// A closed interval `[min, max]`, written `[a, b]` in the data file.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(from = "[f64; 2]", into = "[f64; 2]")]
pub struct Range {
    /// Lower bound.
    pub min: f64,
    /// Upper bound.
    pub max: f64,
}

impl From<[f64; 2]> for Range {
    fn from([min, max]: [f64; 2]) -> Self {
        Range { min, max }
    }
}

impl From<Range> for [f64; 2] {
    fn from(r: Range) -> Self {
        [r.min, r.max]
    }
}

/// One mineral (or field name for a series) the engine can name.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Entry {
    /// Lower-case snake-case id, stable across versions.
    pub id: String,
    /// Name for people.
    pub name: String,
    /// Group the probabilities are summed into.
    pub group: Group,
    /// False for the lookalikes.
    pub sheet_silicate: bool,
    /// Display formula, as mineralogists write it.
    pub formula: String,
    /// One parsable, charge-balanced end-member formula for chemistry.
    pub ideal_formula: String,
    /// Non-empty when the field name stands for a series or group.
    #[serde(default)]
    pub series: String,
    /// Relative base rate (not normalised).
    pub prior: f64,
    /// Mohs hardness on a cleavage face where there is one.
    pub hardness: Range,
    /// Specific gravity.
    pub specific_gravity: Range,
    /// Hazards that call for a caution.
    #[serde(default)]
    pub hazards: Vec<Hazard>,
    /// How to tell it from its lookalikes, in plain words.
    pub notes: String,
    /// What a laboratory method settles that a hand sample cannot.
    #[serde(default)]
    pub lab: String,
    /// Other field names logged under this entry.
    #[serde(default)]
    pub aliases: Vec<String>,
    /// Best cleavage seen.
    pub cleavage: Values<Cleavage>,
    /// Tenacity of a flake or fragment.
    pub tenacity: Values<Tenacity>,
    /// Colours.
    pub colour: Values<Colour>,
    /// Luster.
    pub luster: Values<Luster>,
    /// Habit.
    pub habit: Values<Habit>,
    /// Feel.
    pub feel: Values<Feel>,
    /// A pinch with water.
    pub wet_behaviour: Values<WetBehaviour>,
    /// Streak.
    pub streak: Values<Streak>,
    /// Diaphaneity.
    pub diaphaneity: Values<Diaphaneity>,
    /// Attracted to a hand magnet.
    pub magnetic: Values<bool>,
    /// Fizzes in cold dilute HCl.
    pub acid_reaction: Values<bool>,
    /// Where it is found.
    pub setting: Values<Setting>,
    /// Property name -> source key.
    pub sources: BTreeMap<String, String>,
}

/// An entry's ideal composition, computed from its ideal formula.
#[derive(Clone, Debug, Serialize)]
pub struct IdealComposition {
    /// The formula the figures are computed from.
    pub formula: String,
    /// Molar mass, g/mol (IUPAC 2021 standard atomic weights).
    pub molar_mass_g_mol: f64,
    /// Oxide weight percent, in analysis order; empty for sulfides and
    /// native elements.
    pub oxides: Vec<(String, f64)>,
    /// Oxygen equivalent of F and Cl, subtracted from the oxide total.
    pub halogen_correction: f64,
    /// Element weight percent.
    pub elements: Vec<(String, f64)>,
    /// Bound water (all H as H2O), weight percent.
    pub bound_water_wt_percent: f64,
}

impl Entry {
    /// The ideal composition of this entry's end member.
    pub fn ideal_composition(&self) -> Option<IdealComposition> {
        let f = Formula::parse(&self.ideal_formula).ok()?;
        let round = |x: f64| (x * 100.0).round() / 100.0;
        let (oxides, halogen_correction) = match f.oxide_weight_percent() {
            Ok(c) => (
                c.components
                    .iter()
                    .map(|o| (o.name.clone(), round(o.wt_percent)))
                    .collect(),
                round(c.halogen_correction),
            ),
            Err(_) => (Vec::new(), 0.0),
        };
        Some(IdealComposition {
            formula: self.ideal_formula.clone(),
            molar_mass_g_mol: (f.molar_mass() * 1000.0).round() / 1000.0,
            oxides,
            halogen_correction,
            elements: f
                .weight_fractions()
                .iter()
                .map(|(e, w)| (e.symbol().to_string(), round(w * 100.0)))
                .collect(),
            bound_water_wt_percent: round(f.bound_water_wt_percent()),
        })
    }
}

/// The whole base.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Base {
    /// Named sources, cited by key.
    pub sources: BTreeMap<String, Source>,
    /// The entries, in file order.
    #[serde(rename = "entry")]
    pub entries: Vec<Entry>,
    /// A hash of the data file; changes whenever the base does.
    #[serde(skip)]
    pub version: String,
}

/// Why a base failed to load.
#[derive(Debug, thiserror::Error)]
pub enum BaseError {
    /// The TOML is malformed or holds an unknown field or enum value.
    #[error("the property base does not parse: {0}")]
    Parse(String),
    /// The base parsed but breaks a rule.
    #[error("the property base is invalid:\n- {}", .0.join("\n- "))]
    Invalid(Vec<String>),
}

/// FNV-1a (64 bit) of the data file: cheap, stable across platforms, and
/// good enough to tell one reviewed version of the file from another.
fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

impl Base {
    /// Parses and validates a base from its TOML text.
    pub fn parse(text: &str) -> Result<Base, BaseError> {
        let mut base: Base = toml::from_str(text).map_err(|e| BaseError::Parse(e.to_string()))?;
        base.version = format!("base-{:016x}", fnv1a64(text.as_bytes()));
        let problems = base.validate();
        if problems.is_empty() {
            Ok(base)
        } else {
            Err(BaseError::Invalid(problems))
        }
    }

    /// Every rule the base must keep; an empty list means it keeps them all.
    pub fn validate(&self) -> Vec<String> {
        let mut p = Vec::new();
        for (key, source) in &self.sources {
            if source.citation.trim().is_empty() {
                p.push(format!("source {key}: empty citation"));
            }
        }
        let mut seen = BTreeSet::new();
        for e in &self.entries {
            let id = &e.id;
            if !seen.insert(id.as_str()) {
                p.push(format!("{id}: duplicate id"));
            }
            if id.is_empty()
                || !id
                    .chars()
                    .all(|c| c.is_ascii_lowercase() || c == '_' || c.is_ascii_digit())
            {
                p.push(format!("{id}: id must be lower-case snake case"));
            }
            if e.name.trim().is_empty() || e.notes.trim().is_empty() || e.formula.trim().is_empty()
            {
                p.push(format!("{id}: name, formula and notes must not be empty"));
            }
            if (e.group == Group::NotSheetSilicate) == e.sheet_silicate {
                p.push(format!(
                    "{id}: group {} disagrees with sheet_silicate = {}",
                    e.group, e.sheet_silicate
                ));
            }
            if !(e.prior.is_finite() && e.prior > 0.0) {
                p.push(format!("{id}: prior must be a positive number"));
            }
            check_range(&mut p, id, "hardness", e.hardness, 1.0, 10.0);
            check_range(&mut p, id, "specific_gravity", e.specific_gravity, 1.0, 8.0);
            check_values(&mut p, id, "cleavage", &e.cleavage);
            check_values(&mut p, id, "tenacity", &e.tenacity);
            check_values(&mut p, id, "colour", &e.colour);
            check_values(&mut p, id, "luster", &e.luster);
            check_values(&mut p, id, "habit", &e.habit);
            check_values(&mut p, id, "feel", &e.feel);
            check_values(&mut p, id, "wet_behaviour", &e.wet_behaviour);
            check_values(&mut p, id, "streak", &e.streak);
            check_values(&mut p, id, "diaphaneity", &e.diaphaneity);
            check_values(&mut p, id, "magnetic", &e.magnetic);
            check_values(&mut p, id, "acid_reaction", &e.acid_reaction);
            check_values(&mut p, id, "setting", &e.setting);
            match Formula::parse(&e.ideal_formula) {
                Ok(f) => {
                    let balance = f.charge_balance();
                    if !balance.is_balanced(1e-6) {
                        p.push(format!(
                            "{id}: ideal formula {} is not charge-balanced ({balance:?})",
                            e.ideal_formula
                        ));
                    }
                }
                Err(err) => p.push(format!(
                    "{id}: ideal formula {} does not parse: {err}",
                    e.ideal_formula
                )),
            }
            for prop in SOURCED_PROPERTIES {
                match e.sources.get(*prop) {
                    None => p.push(format!("{id}: no source for {prop}")),
                    Some(key) if !self.sources.contains_key(key) => p.push(format!(
                        "{id}: source {key} for {prop} is not a known source"
                    )),
                    Some(_) => {}
                }
            }
            for prop in e.sources.keys() {
                if !SOURCED_PROPERTIES.contains(&prop.as_str()) {
                    p.push(format!("{id}: source given for unknown property {prop}"));
                }
            }
        }
        for required in REQUIRED_IDS {
            if !seen.contains(required) {
                p.push(format!("the contract's entry {required} is missing"));
            }
        }
        p
    }

    /// The entry with this id.
    pub fn entry(&self, id: &str) -> Option<&Entry> {
        self.entries.iter().find(|e| e.id == id)
    }

    /// Position of the entry with this id.
    pub fn index_of(&self, id: &str) -> Option<usize> {
        self.entries.iter().position(|e| e.id == id)
    }

    /// The source an entry cites for a property.
    pub fn source_for(&self, entry: &Entry, property: &str) -> Option<&Source> {
        entry
            .sources
            .get(property)
            .and_then(|k| self.sources.get(k))
    }
}

fn check_range(p: &mut Vec<String>, id: &str, what: &str, r: Range, lo: f64, hi: f64) {
    if !(r.min.is_finite() && r.max.is_finite() && lo <= r.min && r.min <= r.max && r.max <= hi) {
        p.push(format!(
            "{id}: {what} range [{}, {}] must be ordered and within {lo}..{hi}",
            r.min, r.max
        ));
    }
}

fn check_values<T: PartialEq + std::fmt::Debug>(
    p: &mut Vec<String>,
    id: &str,
    what: &str,
    v: &Values<T>,
) {
    if v.typical.is_empty() {
        p.push(format!("{id}: {what} has no typical value"));
    }
    let all: Vec<&T> = v.typical.iter().chain(&v.occasional).collect();
    for (i, a) in all.iter().enumerate() {
        if all[..i].contains(a) {
            p.push(format!("{id}: {what} lists {a:?} twice"));
        }
    }
}

/// The base compiled into this binary, parsed and validated once.
///
/// The data file is part of the source and the test suite validates it, so
/// a failure here is a build defect, not a user error; the message says
/// exactly which rule broke.
pub fn builtin() -> &'static Base {
    static BASE: LazyLock<Base> = LazyLock::new(|| match Base::parse(BASE_TOML) {
        Ok(b) => b,
        Err(e) => panic!("{e}"),
    });
    &BASE
}

/// Labels of a vocabulary list, joined for people.
pub fn labels<T: Vocab>(values: &[T]) -> String {
    values
        .iter()
        .map(|v| v.label())
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_builtin_base_is_valid() {
        let base = Base::parse(BASE_TOML).unwrap_or_else(|e| panic!("{e}"));
        assert!(base.entries.len() >= REQUIRED_IDS.len());
    }

    #[test]
    fn every_required_entry_is_present_with_a_source_for_every_property() {
        let base = builtin();
        for id in REQUIRED_IDS {
            let e = base.entry(id).unwrap_or_else(|| panic!("{id} missing"));
            for prop in SOURCED_PROPERTIES {
                assert!(base.source_for(e, prop).is_some(), "{id}.{prop}");
            }
        }
    }

    /// Every specific-gravity range states, in the comment line above it,
    /// the measured density the handbook sheet prints (`# SG: HoM … D(meas.)
    /// …`) or that it is from memory and why (`# SG from memory: …`), and the
    /// comment agrees with the entry's source key for the range.
    #[test]
    fn every_sg_range_names_its_printed_figure_or_says_from_memory() {
        let base = builtin();
        let mut id: Option<&str> = None;
        let mut previous = "";
        let mut checked = 0;
        for line in BASE_TOML.lines() {
            if let Some(rest) = line.strip_prefix("id = \"") {
                id = rest.strip_suffix('"');
            }
            if line.starts_with("specific_gravity = [") {
                let id = id.unwrap_or_else(|| panic!("a range before any id: {line}"));
                let entry = base
                    .entry(id)
                    .unwrap_or_else(|| panic!("{id} is not an entry"));
                let key = entry.sources.get("specific_gravity").map(String::as_str);
                match key {
                    Some("memory") => assert!(
                        previous.starts_with("# SG from memory: ") && previous.len() > 40,
                        "{id}: SG from memory without saying so and why: {previous:?}"
                    ),
                    Some("hom" | "hom_transcribed") => assert!(
                        previous.starts_with("# SG: HoM ") && previous.contains("D(meas.)"),
                        "{id}: SG cites the handbook without the printed figure: {previous:?}"
                    ),
                    other => panic!("{id}: SG source {other:?} is neither the handbook nor memory"),
                }
                checked += 1;
            }
            previous = line;
        }
        assert_eq!(checked, base.entries.len(), "one SG range per entry");
    }

    #[test]
    fn series_and_group_field_names_say_so() {
        let base = builtin();
        for id in ["biotite", "chlorite", "smectite", "lepidolite"] {
            let e = base.entry(id).unwrap_or_else(|| panic!("{id} missing"));
            assert!(
                !e.series.trim().is_empty(),
                "{id} must say it is a series or group"
            );
        }
        for id in ["muscovite", "illite"] {
            let e = base.entry(id).unwrap_or_else(|| panic!("{id} missing"));
            let text = format!("{} {} {:?}", e.notes, e.series, e.aliases).to_lowercase();
            assert!(text.contains("sericite"), "{id} must mention sericite");
        }
    }

    #[test]
    fn the_lookalikes_are_not_sheet_silicates() {
        let base = builtin();
        for id in [
            "graphite",
            "molybdenite",
            "gypsum",
            "hematite",
            "brucite",
            "chloritoid",
        ] {
            let e = base.entry(id).unwrap_or_else(|| panic!("{id} missing"));
            assert!(!e.sheet_silicate, "{id}");
            assert_eq!(e.group, Group::NotSheetSilicate, "{id}");
        }
    }

    #[test]
    fn every_entry_has_an_ideal_composition_that_adds_up() {
        for e in &builtin().entries {
            let c = e.ideal_composition().unwrap_or_else(|| panic!("{}", e.id));
            let elements: f64 = c.elements.iter().map(|(_, w)| w).sum();
            assert!(
                (elements - 100.0).abs() < 0.1,
                "{}: elements {elements}",
                e.id
            );
            if !c.oxides.is_empty() {
                let total: f64 =
                    c.oxides.iter().map(|(_, w)| w).sum::<f64>() - c.halogen_correction;
                assert!((total - 100.0).abs() < 0.1, "{}: oxides {total}", e.id);
            }
        }
    }

    #[test]
    fn chrysotile_carries_the_asbestos_hazard() {
        let e = builtin().entry("chrysotile").expect("chrysotile");
        assert!(e.hazards.contains(&Hazard::Asbestos));
    }

    #[test]
    fn the_version_is_a_hash_of_the_file() {
        let a = Base::parse(BASE_TOML).expect("valid");
        let changed = format!("{BASE_TOML}\n# a reviewer's comment\n");
        let b = Base::parse(&changed).expect("still valid");
        assert_ne!(a.version, b.version);
        assert_eq!(a.version, builtin().version);
    }

    /// Replaces the first occurrence of `from` in the real file, so each
    /// broken variant differs from a valid base by exactly one value.
    fn broken(from: &str, to: &str) -> Result<Base, BaseError> {
        assert!(
            BASE_TOML.contains(from),
            "test fixture: {from:?} not in base"
        );
        Base::parse(&BASE_TOML.replacen(from, to, 1))
    }

    #[test]
    fn an_unknown_enum_value_is_refused() {
        assert!(matches!(
            broken("\"one_perfect\"", "\"one_perfekt\""),
            Err(BaseError::Parse(_))
        ));
    }

    #[test]
    fn a_disordered_range_is_refused() {
        let first = &builtin().entries[0];
        let from = format!(
            "hardness = [{:?}, {:?}]",
            first.hardness.min, first.hardness.max
        );
        let to = format!(
            "hardness = [{:?}, {:?}]",
            first.hardness.max + 1.0,
            first.hardness.min
        );
        match broken(&from, &to) {
            Err(BaseError::Invalid(p)) => assert!(p.iter().any(|m| m.contains("hardness"))),
            other => panic!("expected invalid, got {other:?}"),
        }
    }

    #[test]
    fn a_formula_that_does_not_balance_is_refused() {
        let first = &builtin().entries[0];
        let from = format!("ideal_formula = \"{}\"", first.ideal_formula);
        let to = format!("ideal_formula = \"{}K\"", first.ideal_formula);
        match broken(&from, &to) {
            Err(BaseError::Invalid(p)) => assert!(p.iter().any(|m| m.contains("balanced"))),
            other => panic!("expected invalid, got {other:?}"),
        }
    }

    #[test]
    fn a_formula_that_does_not_parse_is_refused() {
        let first = &builtin().entries[0];
        let from = format!("ideal_formula = \"{}\"", first.ideal_formula);
        let to = format!("ideal_formula = \"{}Xq\"", first.ideal_formula);
        match broken(&from, &to) {
            Err(BaseError::Invalid(p)) => assert!(p.iter().any(|m| m.contains("parse"))),
            other => panic!("expected invalid, got {other:?}"),
        }
    }

    #[test]
    fn a_value_without_a_source_is_refused() {
        // Drop the first entry's hardness source line.
        let key = builtin().entries[0].sources["hardness"].clone();
        match broken(&format!("hardness = \"{key}\""), "") {
            Err(BaseError::Invalid(p)) => assert!(p.iter().any(|m| m.contains("no source"))),
            other => panic!("expected invalid, got {other:?}"),
        }
    }

    #[test]
    fn a_source_key_that_names_no_source_is_refused() {
        let key = builtin().entries[0].sources["hardness"].clone();
        match broken(&format!("hardness = \"{key}\""), "hardness = \"nowhere\"") {
            Err(BaseError::Invalid(p)) => assert!(p.iter().any(|m| m.contains("not a known"))),
            other => panic!("expected invalid, got {other:?}"),
        }
    }
}
