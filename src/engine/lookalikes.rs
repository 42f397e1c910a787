//! Nearest lookalikes: for one entry, the entries the engine finds hardest
//! to tell from it, and the tests that tell each pair apart best.
//!
//! Nothing here is written by hand: everything is computed from the engine's
//! answer tables, which are built from the base (see [`super::model`]).
//!
//! # The measure
//!
//! For a property `p` the engine holds, per entry `e`, the probability
//! `pₑ(a)` of every answer `a` a careful observer may give (each row sums
//! to 1; hardness and specific gravity are asked as the answer bins of
//! [`super::model::HARDNESS_BINS`] and [`super::model::SG_BINS`]). How much
//! two entries `e` and `f` overlap on `p` is the Bhattacharyya coefficient
//! of their answer distributions:
//!
//! ```text
//! BCₚ(e, f) = Σₐ √( pₑ(a) · p_f(a) )          0 < BCₚ ≤ 1
//! ```
//!
//! 1 means the test cannot tell them apart at all; near 0 means it always
//! can (with even odds, the error of the best decision between `e` and `f`
//! from test `p` alone is at most `BCₚ(e, f) / 2`). The similarity of two
//! entries is the mean overlap over all 14 properties:
//!
//! ```text
//! S(e, f) = (1/14) Σₚ BCₚ(e, f)                 0 < S ≤ 1
//! ```
//!
//! that is, how little a test picked at random tells the pair apart. It
//! leaves the priors out (a rare mineral is as much a lookalike of a common
//! one as the other way round), it is symmetric, and `S(e, e) = 1`. The mean
//! is chosen over the product `Πₚ BCₚ` (the overlap of the joint answer
//! distributions) on purpose: a lookalike is what a specimen is taken for
//! *before* the deciding test is made, so one decisive test (graphite
//! against molybdenite on a balance) must not hide a pair that agrees on
//! everything else.
//!
//! The nearest lookalikes of an entry are the [`NEAREST`] other entries of
//! highest `S` (ties broken by id, so the list is deterministic), and one
//! more when it comes within [`NEAR_TIE`] of the last of them, since cutting
//! a near tie would be arbitrary.
//!
//! # Which tests separate a pair
//!
//! The overlap above mixes in every value a mineral shows now and then (the
//! occasional values, the observer-error floor), which is right for scoring
//! and for "what is it taken for", but wrong for "which test tells them
//! apart": a small tail (muscovite is occasionally soapy) then reads as a
//! contrast no mineralogist would draw. So a test is offered only when the
//! contrast is in what both minerals *typically* show ([`contrast`]):
//!
//! - a categorical property separates the pair when their typical value
//!   sets are disjoint ([`Contrast::Disjoint`]: whatever a typical specimen
//!   shows points to one of them), or when each has a typical value that the
//!   other never shows, neither typically nor occasionally
//!   ([`Contrast::EachHasItsOwn`]: chlorite's greenish streak against
//!   biotite's grey one, while a white streak leaves it open);
//! - hardness separates when the two ranges lie at least [`HARDNESS_GAP`]
//!   apart, specific gravity when they lie at least [`SG_GAP`] apart
//!   ([`Contrast::Disjoint`]): ranges that touch or overlap cannot be told
//!   apart by a reading with its usual error.
//!
//! The separating tests of a pair are those properties, disjoint ones
//! first, then by lowest `BCₚ` (ties in the order of [`Property::ALL`]), up
//! to [`SEPARATORS`]. When there is none, no hand test separates the pair
//! and the pages say so (with the base's laboratory note). The setting
//! counts towards `S` but is never offered as a test: it is where the
//! specimen was found, not something done to it.

use crate::base::vocab::{Vocab, YesNo};
use crate::base::{Entry, Range, Values};

use super::Property;
use super::model::Engine;

/// How many lookalikes are always listed (when the base has that many).
pub const NEAREST: usize = 3;

/// A further lookalike is listed when its similarity falls short of the
/// last listed one's by at most this much (a near tie: one test in 14
/// overlapping 0.14 more or less).
pub const NEAR_TIE: f64 = 0.01;

/// At most this many separating tests are given per lookalike.
pub const SEPARATORS: usize = 3;

/// Hardness ranges separate a pair only when at least this far apart
/// (Mohs): two scratch readings, each good to about half a step
/// ([`super::measure::HARDNESS_SIGMA`]), must not meet in between. Common
/// practice: a hand test tells minerals a whole step apart, not half a step.
pub const HARDNESS_GAP: f64 = 2.0 * super::measure::HARDNESS_SIGMA;

/// Specific-gravity ranges separate a pair only when at least this far
/// apart: twice the error of a pocket-balance figure
/// ([`super::measure::SG_VALUE_SIGMA`], common practice).
pub const SG_GAP: f64 = 2.0 * super::measure::SG_VALUE_SIGMA;

/// How a property tells two entries apart by what they typically show (see
/// the module doc). No contrast is `None` from [`contrast`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Contrast {
    /// Typical value sets disjoint, or ranges far enough apart: every
    /// typical outcome points to one of the two.
    Disjoint,
    /// Each has a typical value the other never shows; shared typical
    /// values leave the question open.
    EachHasItsOwn,
}

/// One value an entry shows, as the contract names it and as people read it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Shown {
    /// The contract value (`"elastic"`).
    pub value: &'static str,
    /// Its label for people (`"elastic (springs back)"`).
    pub label: &'static str,
}

/// What an entry shows for one property: a list of vocabulary values, or a
/// range of numbers.
#[derive(Clone, Debug, PartialEq)]
pub enum Shows {
    /// Categorical values (may be empty for occasional values).
    Values(Vec<Shown>),
    /// A Mohs hardness range.
    Hardness(Range),
    /// A specific-gravity range.
    SpecificGravity(Range),
}

impl Shows {
    /// Whether there is nothing to show (no occasional values).
    pub fn is_empty(&self) -> bool {
        matches!(self, Shows::Values(v) if v.is_empty())
    }

    /// Text for people: labels joined with semicolons (a label may hold
    /// "or" or a comma itself), ranges as `2.5–3`.
    pub fn labels(&self) -> String {
        match self {
            Shows::Values(v) => v.iter().map(|s| s.label).collect::<Vec<_>>().join("; "),
            _ => self.to_string(),
        }
    }
}

impl std::fmt::Display for Shows {
    /// Contract values joined with "or"; hardness as `2.5–3`, specific
    /// gravity to two decimals as `2.77–2.88`.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Shows::Values(v) => f.write_str(&join_or(v.iter().map(|s| s.value))),
            Shows::Hardness(r) if r.min == r.max => write!(f, "{}", r.min),
            Shows::Hardness(r) => write!(f, "{}–{}", r.min, r.max),
            Shows::SpecificGravity(r) if r.min == r.max => write!(f, "{:.2}", r.min),
            Shows::SpecificGravity(r) => write!(f, "{:.2}–{:.2}", r.min, r.max),
        }
    }
}

fn join_or<'a>(items: impl Iterator<Item = &'a str>) -> String {
    let items: Vec<&str> = items.collect();
    match items.split_last() {
        Some((last, rest)) if !rest.is_empty() => format!("{} or {last}", rest.join(", ")),
        Some((last, _)) => (*last).to_string(),
        None => String::new(),
    }
}

fn shown<T: Vocab>(values: &[T]) -> Shows {
    Shows::Values(
        values
            .iter()
            .map(|v| Shown {
                value: v.as_str(),
                label: v.label(),
            })
            .collect(),
    )
}

fn yes_no(values: &[bool]) -> Shows {
    let v: Vec<YesNo> = values.iter().map(|b| YesNo::from(*b)).collect();
    shown(&v)
}

/// Picks the typical or the occasional list of a property's values.
fn pick<T>(v: &Values<T>, typical: bool) -> &[T] {
    if typical { &v.typical } else { &v.occasional }
}

fn shows(e: &Entry, p: Property, typical: bool) -> Shows {
    match p {
        Property::Cleavage => shown(pick(&e.cleavage, typical)),
        Property::Tenacity => shown(pick(&e.tenacity, typical)),
        Property::Colour => shown(pick(&e.colour, typical)),
        Property::Luster => shown(pick(&e.luster, typical)),
        Property::Habit => shown(pick(&e.habit, typical)),
        Property::Feel => shown(pick(&e.feel, typical)),
        Property::WetBehaviour => shown(pick(&e.wet_behaviour, typical)),
        Property::Streak => shown(pick(&e.streak, typical)),
        Property::Diaphaneity => shown(pick(&e.diaphaneity, typical)),
        Property::Magnetic => yes_no(pick(&e.magnetic, typical)),
        Property::AcidReaction => yes_no(pick(&e.acid_reaction, typical)),
        Property::Setting => shown(pick(&e.setting, typical)),
        // A range has no occasional part: the range is what the base holds.
        Property::Hardness if typical => Shows::Hardness(e.hardness),
        Property::SpecificGravity if typical => Shows::SpecificGravity(e.specific_gravity),
        Property::Hardness | Property::SpecificGravity => Shows::Values(Vec::new()),
    }
}

/// What an entry typically shows for a property: its typical values, or its
/// hardness or specific-gravity range.
pub fn typical(e: &Entry, p: Property) -> Shows {
    shows(e, p, true)
}

/// What an entry occasionally shows for a property (empty for hardness and
/// specific gravity, whose ranges are given whole by [`typical`]).
pub fn occasional(e: &Entry, p: Property) -> Shows {
    shows(e, p, false)
}

fn values_of(s: &Shows) -> Vec<&'static str> {
    match s {
        Shows::Values(v) => v.iter().map(|x| x.value).collect(),
        _ => Vec::new(),
    }
}

fn ranges_apart(a: Range, b: Range, gap: f64) -> bool {
    // A small slack so that a gap of exactly one step (2–2.5 against 3.5)
    // is not lost to floating point.
    b.min - a.max >= gap - 1e-9 || a.min - b.max >= gap - 1e-9
}

/// Whether, and how, property `p` separates entries `a` and `b` by their
/// typical values and ranges alone (the occasional values count only as
/// "shows it sometimes"). Symmetric.
pub fn contrast(a: &Entry, b: &Entry, p: Property) -> Option<Contrast> {
    match p {
        Property::Hardness => {
            ranges_apart(a.hardness, b.hardness, HARDNESS_GAP).then_some(Contrast::Disjoint)
        }
        Property::SpecificGravity => ranges_apart(a.specific_gravity, b.specific_gravity, SG_GAP)
            .then_some(Contrast::Disjoint),
        _ => {
            let (ta, tb) = (values_of(&typical(a, p)), values_of(&typical(b, p)));
            if ta.is_empty() || tb.is_empty() {
                return None;
            }
            if ta.iter().all(|v| !tb.contains(v)) {
                return Some(Contrast::Disjoint);
            }
            let (oa, ob) = (values_of(&occasional(a, p)), values_of(&occasional(b, p)));
            let own = |t: &[&str], other_t: &[&str], other_o: &[&str]| {
                t.iter()
                    .any(|v| !other_t.contains(v) && !other_o.contains(v))
            };
            (own(&ta, &tb, &ob) && own(&tb, &ta, &oa)).then_some(Contrast::EachHasItsOwn)
        }
    }
}

/// How much entries `i` and `j` (positions in the base) overlap on `p`:
/// the Bhattacharyya coefficient `Σₐ √(pᵢ(a) · pⱼ(a))`, in `(0, 1]`.
/// Positions outside the base overlap nowhere (0).
pub fn overlap(engine: &Engine, p: Property, i: usize, j: usize) -> f64 {
    let t = engine.table(p);
    match (t.p.get(i), t.p.get(j)) {
        (Some(a), Some(b)) => a.iter().zip(b).map(|(x, y)| (x * y).sqrt()).sum(),
        _ => 0.0,
    }
}

/// The similarity of entries `i` and `j` over all 14 properties: the
/// product of their per-property overlaps (see the module doc).
pub fn similarity(engine: &Engine, i: usize, j: usize) -> f64 {
    Property::ALL
        .iter()
        .map(|&p| overlap(engine, p, i, j))
        .sum::<f64>()
        / Property::ALL.len() as f64
}

/// A test that separates an entry from one of its lookalikes.
#[derive(Clone, Debug, PartialEq)]
pub struct Separator {
    /// The property to test.
    pub property: Property,
    /// Its overlap `BCₚ` for the pair (lower separates better).
    pub overlap: f64,
    /// How the typical values contrast.
    pub contrast: Contrast,
    /// What the entry itself typically shows.
    pub this: Shows,
    /// What the lookalike typically shows.
    pub other: Shows,
}

/// One of an entry's nearest lookalikes.
#[derive(Clone, Debug, PartialEq)]
pub struct Lookalike {
    /// The lookalike's entry id.
    pub id: String,
    /// Its name.
    pub name: String,
    /// Similarity `S` to the entry, in `(0, 1]`.
    pub similarity: f64,
    /// The tests that separate the pair best, best first.
    pub separators: Vec<Separator>,
}

impl Lookalike {
    /// Whether no hand test separates the pair (no property passes
    /// [`contrast`]).
    pub fn hard_to_separate(&self) -> bool {
        self.separators.is_empty()
    }
}

/// Every test that separates entries `i` and `j` by [`contrast`], best
/// first: disjoint contrasts before partial ones, then lowest overlap
/// (ties in the order of [`Property::ALL`]). The setting is left out.
/// Empty when no hand test separates them, or for a position outside the
/// base.
pub fn all_separators(engine: &Engine, i: usize, j: usize) -> Vec<Separator> {
    let entries = &engine.base().entries;
    let (Some(a), Some(b)) = (entries.get(i), entries.get(j)) else {
        return Vec::new();
    };
    let mut tests: Vec<Separator> = Property::ALL
        .iter()
        .filter(|p| **p != Property::Setting)
        .filter_map(|&p| {
            contrast(a, b, p).map(|c| Separator {
                property: p,
                overlap: overlap(engine, p, i, j),
                contrast: c,
                this: typical(a, p),
                other: typical(b, p),
            })
        })
        .collect();
    // A stable sort keeps the order of Property::ALL among equal keys.
    tests.sort_by(|x, y| {
        x.contrast
            .cmp(&y.contrast)
            .then(x.overlap.total_cmp(&y.overlap))
    });
    tests
}

/// The best [`SEPARATORS`] of [`all_separators`].
pub fn separators(engine: &Engine, i: usize, j: usize) -> Vec<Separator> {
    let mut tests = all_separators(engine, i, j);
    tests.truncate(SEPARATORS);
    tests
}

/// The nearest lookalikes of the entry with this id, most similar first;
/// `None` when the base has no such entry. The entry itself is never among
/// them.
pub fn lookalikes(engine: &Engine, id: &str) -> Option<Vec<Lookalike>> {
    let base = engine.base();
    let i = base.index_of(id)?;
    let mut ranked: Vec<(usize, f64)> = (0..base.entries.len())
        .filter(|&j| j != i)
        .map(|j| (j, similarity(engine, i, j)))
        .collect();
    ranked.sort_by(|x, y| {
        y.1.total_cmp(&x.1)
            .then_with(|| base.entries[x.0].id.cmp(&base.entries[y.0].id))
    });
    let mut keep = NEAREST.min(ranked.len());
    if let (Some(last), Some(next)) = (keep.checked_sub(1).map(|k| ranked[k]), ranked.get(keep))
        && next.1 >= last.1 - NEAR_TIE
    {
        keep += 1;
    }
    Some(
        ranked
            .into_iter()
            .take(keep)
            .map(|(j, s)| Lookalike {
                id: base.entries[j].id.clone(),
                name: base.entries[j].name.clone(),
                similarity: s,
                separators: separators(engine, i, j),
            })
            .collect(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn engine() -> &'static Engine {
        Engine::builtin()
    }

    fn index(id: &str) -> usize {
        engine()
            .base()
            .index_of(id)
            .unwrap_or_else(|| panic!("{id} not in the base"))
    }

    fn nearest(id: &str) -> Vec<Lookalike> {
        lookalikes(engine(), id).unwrap_or_else(|| panic!("{id} not in the base"))
    }

    fn ids(list: &[Lookalike]) -> Vec<&str> {
        list.iter().map(|l| l.id.as_str()).collect()
    }

    /// The separators of a pair, by property.
    fn separating(a: &str, b: &str) -> Vec<Property> {
        separators(engine(), index(a), index(b))
            .iter()
            .map(|s| s.property)
            .collect()
    }

    #[test]
    fn every_answer_table_row_is_a_distribution() {
        // The measure needs rows that sum to 1 (model.rs says they do).
        let e = engine();
        for p in Property::ALL {
            for (i, row) in e.table(p).p.iter().enumerate() {
                let total: f64 = row.iter().sum();
                assert!((total - 1.0).abs() < 1e-6, "{p} row {i}: {total}");
            }
        }
    }

    #[test]
    fn an_entry_overlaps_itself_completely() {
        let e = engine();
        for i in 0..e.base().entries.len() {
            assert!((similarity(e, i, i) - 1.0).abs() < 1e-9);
        }
    }

    #[test]
    fn similarity_is_symmetric_and_between_zero_and_one() {
        let e = engine();
        let n = e.base().entries.len();
        for i in 0..n {
            for j in 0..n {
                let (s, t) = (similarity(e, i, j), similarity(e, j, i));
                assert_eq!(s, t, "{i} {j}");
                assert!(s > 0.0 && s <= 1.0 + 1e-12, "{i} {j}: {s}");
            }
        }
    }

    #[test]
    fn every_entry_gets_three_or_four_lookalikes_without_itself() {
        for entry in &engine().base().entries {
            let list = nearest(&entry.id);
            assert!(
                (3..=4).contains(&list.len()),
                "{}: {}",
                entry.id,
                list.len()
            );
            assert!(
                list.iter().all(|l| l.id != entry.id),
                "{} lists itself",
                entry.id
            );
            for w in list.windows(2) {
                assert!(w[0].similarity >= w[1].similarity, "{}", entry.id);
            }
            for l in &list {
                assert!(l.separators.len() <= SEPARATORS, "{} / {}", entry.id, l.id);
                assert_eq!(l.hard_to_separate(), l.separators.is_empty());
                for w in l.separators.windows(2) {
                    assert!(
                        (w[0].contrast, w[0].overlap) <= (w[1].contrast, w[1].overlap),
                        "{} / {}: not best first",
                        entry.id,
                        l.id
                    );
                }
                // Every test offered passes the typical-value rule.
                let other = engine().base().entry(&l.id).expect("lookalike in base");
                for s in &l.separators {
                    assert_eq!(
                        contrast(entry, other, s.property),
                        Some(s.contrast),
                        "{} / {}",
                        entry.id,
                        l.id
                    );
                }
                assert!(
                    l.separators.iter().all(|s| s.property != Property::Setting),
                    "{} / {}",
                    entry.id,
                    l.id
                );
            }
        }
    }

    #[test]
    fn results_are_deterministic() {
        for entry in &engine().base().entries {
            assert_eq!(nearest(&entry.id), nearest(&entry.id));
        }
    }

    #[test]
    fn an_unknown_id_has_no_lookalikes() {
        assert_eq!(lookalikes(engine(), "unobtainium"), None);
    }

    #[test]
    fn muscovite_and_paragonite_are_each_others_lookalikes() {
        // The two white micas cannot be told apart in hand specimen (from
        // memory; the base's muscovite notes say the same).
        assert!(ids(&nearest("muscovite")).contains(&"paragonite"));
        assert!(ids(&nearest("paragonite")).contains(&"muscovite"));
        let pair = nearest("muscovite")
            .into_iter()
            .find(|l| l.id == "paragonite")
            .expect("paragonite listed");
        assert!(pair.hard_to_separate(), "{pair:?}");
    }

    #[test]
    fn chlorite_is_told_from_the_micas_by_tenacity_or_streak() {
        // Chlorite flakes bend and stay bent, mica flakes spring back; dark
        // chlorite streaks greenish (common practice).
        for mica in ["muscovite", "biotite"] {
            let tests = separating("chlorite", mica);
            assert!(
                tests.contains(&Property::Tenacity) || tests.contains(&Property::Streak),
                "chlorite / {mica}: {tests:?}"
            );
        }
        let s = &separators(engine(), index("muscovite"), index("chlorite"))[0];
        assert_eq!(s.property, Property::Tenacity);
        assert_eq!(s.this.to_string(), "elastic");
        assert_eq!(s.other.to_string(), "flexible");
    }

    #[test]
    fn graphite_is_told_from_molybdenite_by_specific_gravity() {
        // Graphite about 2.2, molybdenite about 4.7 (Handbook of Mineralogy
        // figures, from memory; the base gives 2.10–2.30 and 4.60–5.00).
        let tests = separating("graphite", "molybdenite");
        assert_eq!(tests.first(), Some(&Property::SpecificGravity), "{tests:?}");
        let s = &separators(engine(), index("graphite"), index("molybdenite"))[0];
        assert_eq!(s.this.to_string(), "2.10–2.30");
        assert_eq!(s.other.to_string(), "4.60–5.00");
        assert!(ids(&nearest("graphite")).contains(&"molybdenite"));
    }

    #[test]
    fn lizardite_and_antigorite_are_near_each_other() {
        // Both massive serpentines, told apart reliably only by XRD or thin
        // section (common practice).
        assert!(ids(&nearest("lizardite")).contains(&"antigorite"));
        assert!(ids(&nearest("antigorite")).contains(&"lizardite"));
    }

    fn contrast_of(a: &str, b: &str, p: Property) -> Option<Contrast> {
        let base = engine().base();
        let (x, y) = (base.entry(a).expect("a"), base.entry(b).expect("b"));
        let c = contrast(x, y, p);
        assert_eq!(c, contrast(y, x, p), "{a} / {b} / {p}: not symmetric");
        c
    }

    #[test]
    fn muscovite_and_lepidolite_are_told_apart_by_colour_not_by_feel() {
        // Lepidolite is lilac to pink, muscovite colourless to silvery grey;
        // colour and a lithium pegmatite setting are the hand-sample clues
        // (Handbook of Mineralogy, polylithionite and muscovite sheets:
        // colours; Klein & Dutrow, Manual of Mineral Science, lepidolite:
        // "pink and lilac", in pegmatites; both from memory, no copy at hand).
        // Both feel smooth: "occasionally soapy" muscovite is no contrast.
        assert_eq!(
            contrast_of("muscovite", "lepidolite", Property::Colour),
            Some(Contrast::Disjoint)
        );
        assert_eq!(contrast_of("muscovite", "lepidolite", Property::Feel), None);
        let tests = separating("muscovite", "lepidolite");
        assert_eq!(tests.first(), Some(&Property::Colour), "{tests:?}");
        assert!(!tests.contains(&Property::Feel), "{tests:?}");
        let s = &separators(engine(), index("muscovite"), index("lepidolite"))[0];
        assert!(s.other.to_string().contains("lilac"), "{s:?}");
    }

    #[test]
    fn no_hand_test_separates_talc_from_pyrophyllite() {
        // "Pyrophyllite cannot be distinguished from talc in hand specimen";
        // XRD or the cobalt nitrate test does (Klein & Dutrow, Manual of
        // Mineral Science, pyrophyllite; from memory). The base's lab note
        // says the same.
        assert_eq!(separating("talc", "pyrophyllite"), Vec::<Property>::new());
        let pair = nearest("talc")
            .into_iter()
            .find(|l| l.id == "pyrophyllite")
            .expect("pyrophyllite is talc's lookalike");
        assert!(pair.hard_to_separate());
        let talc = engine().base().entry("talc").expect("talc");
        assert!(talc.lab.contains("XRD"), "{}", talc.lab);
    }

    #[test]
    fn chlorite_and_biotite_are_told_apart_by_tenacity_and_streak() {
        // Biotite flakes are elastic, chlorite flakes flexible but not
        // elastic; chlorite streaks pale green, biotite white to grey
        // (Handbook of Mineralogy, clinochlore and annite/phlogopite sheets,
        // tenacity and streak; Klein & Dutrow, Manual of Mineral Science,
        // chlorite: "flexible but not elastic"; from memory).
        let tests = separating("chlorite", "biotite");
        assert!(tests.contains(&Property::Tenacity), "{tests:?}");
        assert!(tests.contains(&Property::Streak), "{tests:?}");
        assert_eq!(
            contrast_of("chlorite", "biotite", Property::Tenacity),
            Some(Contrast::Disjoint)
        );
        // A white streak is typical of both, so streak only partly decides.
        assert_eq!(
            contrast_of("chlorite", "biotite", Property::Streak),
            Some(Contrast::EachHasItsOwn)
        );
    }

    #[test]
    fn overlapping_ranges_do_not_separate() {
        // Chlorite 2.60–3.30 and antigorite 2.50–2.65 in the base: the SG
        // ranges overlap, so a balance cannot tell them apart.
        assert_eq!(
            contrast_of("chlorite", "antigorite", Property::SpecificGravity),
            None
        );
        // Chlorite 2–2.5 against biotite 2.5–3: touching ranges.
        assert_eq!(contrast_of("chlorite", "biotite", Property::Hardness), None);
        // Graphite 2.10–2.30 against molybdenite 4.60–5.00: far apart.
        assert_eq!(
            contrast_of("graphite", "molybdenite", Property::SpecificGravity),
            Some(Contrast::Disjoint)
        );
    }

    #[test]
    fn ranges_separate_at_the_gap_and_not_below() {
        let r = |min, max| Range { min, max };
        assert!(ranges_apart(r(2.0, 2.5), r(3.5, 4.0), HARDNESS_GAP));
        assert!(!ranges_apart(r(2.0, 2.5), r(3.4, 4.0), HARDNESS_GAP));
        assert!(ranges_apart(r(3.5, 4.0), r(2.0, 2.5), HARDNESS_GAP));
        assert!(!ranges_apart(r(2.6, 2.8), r(2.9, 3.0), SG_GAP));
    }

    #[test]
    fn shows_reads_the_base() {
        let talc = engine().base().entry("talc").expect("talc");
        assert_eq!(
            typical(talc, Property::Hardness),
            Shows::Hardness(talc.hardness)
        );
        assert!(occasional(talc, Property::Hardness).is_empty());
        assert_eq!(typical(talc, Property::Magnetic).to_string(), "false");
        assert_eq!(typical(talc, Property::Magnetic).labels(), "no");
    }

    #[test]
    fn ranges_and_lists_read_as_people_write_them() {
        let r = |min, max| Range { min, max };
        assert_eq!(Shows::Hardness(r(2.0, 3.0)).to_string(), "2–3");
        assert_eq!(Shows::Hardness(r(2.5, 2.5)).to_string(), "2.5");
        assert_eq!(Shows::SpecificGravity(r(2.7, 3.3)).to_string(), "2.70–3.30");
        let v = |value| Shown {
            value,
            label: value,
        };
        assert_eq!(
            Shows::Values(vec![v("a"), v("b"), v("c")]).to_string(),
            "a, b or c"
        );
        assert_eq!(Shows::Values(vec![v("a")]).to_string(), "a");
        assert_eq!(Shows::Values(vec![v("a"), v("b")]).labels(), "a; b");
    }
}
