//! The scoring model: likelihood tables built once from the base, and the
//! log-space posterior over the entries plus one "outside the base" entry.
//!
//! Categorical properties: an entry's typical values carry weight
//! [`TYPICAL_WEIGHT`], its occasional values [`OCCASIONAL_WEIGHT`], all other
//! values none; the weights are normalised and mixed with a per-property
//! observer-error rate spread evenly over the vocabulary, which is the floor
//! no value falls below. Hardness and specific gravity are intervals scored
//! in closed form ([`super::measure::interval_probability`]) with a small
//! gross-error mix. The outside entry scores each observation about as well
//! as a matching entry would, under a small prior, so it wins exactly when
//! every entry carries conflicts.

use std::sync::Arc;

use crate::base::vocab::{Group, Vocab, YesNo};
use crate::base::{Base, Entry, Values};

use super::Property;
use super::measure::{self, HARDNESS_SIGMA, Interval, SG_VALUE_SIGMA};
use super::observe::{Observations, SgObs};
use super::result::{Candidate, Derived, Evidence, GroupProbability, Identification, SgDerived};

/// Weight of a typical value before normalisation.
pub const TYPICAL_WEIGHT: f64 = 1.0;
/// Weight of an occasional value before normalisation.
pub const OCCASIONAL_WEIGHT: f64 = 0.25;
/// Prior probability that a specimen is none of the base entries. A
/// judgement: a flaky or platy specimen brought to this tool is nearly always
/// one of the sheet silicates or lookalikes in the base.
pub const OUTSIDE_PRIOR: f64 = 0.03;
/// Chance that a hardness reading is grossly wrong (a smear taken for a
/// scratch, the tool slipping onto a harder grain): common practice.
pub const HARDNESS_GROSS_ERROR: f64 = 0.1;
/// Chance that a specific gravity is grossly wrong (bubbles, a porous or
/// mixed piece): common practice.
pub const SG_GROSS_ERROR: f64 = 0.1;
/// Half-width of the interval a directly given specific gravity stands for
/// (read to one decimal place).
pub const SG_VALUE_HALF_WIDTH: f64 = 0.05;
/// How well the outside entry scores an observation, as a fraction of what
/// a matching entry scores. Below 1, so that a specimen that fits an entry
/// gains on the outside entry with every observation; near 1, so that two
/// or three sharp conflicts (each a factor of 20 to 50) are enough to hand
/// the specimen to the outside entry. Tuned on the specimen suite.
pub const OUTSIDE_MATCH_FACTOR: f64 = 0.5;
/// Agreement threshold in bits against the outside model: above it an
/// observation counts as raising the candidate (it scores at least half of
/// a typical match).
pub const AGREE_BITS: f64 = 0.0;
/// Conflict threshold in bits against the outside model: below it an
/// observation counts as lowering the candidate (under a tenth of a typical
/// match: the value is neither typical nor occasional for it).
pub const CONFLICT_BITS: f64 = -2.32;

/// Observer-error rate per property: how often a careful observer reports a
/// value the mineral does not show. Streak and a magnet are read reliably,
/// luster and colour far less so (common practice; the figures are
/// judgements, tuned on the specimen suite in `tests/`).
pub fn observer_error(p: Property) -> f64 {
    match p {
        Property::Cleavage => 0.08,
        Property::Tenacity => 0.12,
        Property::Colour => 0.20,
        Property::Luster => 0.20,
        Property::Habit => 0.15,
        Property::Feel => 0.15,
        Property::WetBehaviour => 0.12,
        Property::Streak => 0.06,
        Property::Diaphaneity => 0.10,
        Property::Magnetic => 0.08,
        Property::AcidReaction => 0.08,
        Property::Setting => 0.15,
        Property::Hardness => HARDNESS_GROSS_ERROR,
        Property::SpecificGravity => SG_GROSS_ERROR,
    }
}

/// Answer bins for hardness questions: what a fingernail, copper and steel
/// can tell apart (common practice reference hardnesses).
pub const HARDNESS_BINS: [(f64, f64, &str); 4] = [
    (
        f64::NEG_INFINITY,
        measure::reference::FINGERNAIL,
        "softer than a fingernail (below 2.5)",
    ),
    (
        measure::reference::FINGERNAIL,
        measure::reference::COPPER,
        "between fingernail and copper (2.5 to 3.5)",
    ),
    (
        measure::reference::COPPER,
        measure::reference::STEEL,
        "between copper and steel (3.5 to 5.5)",
    ),
    (
        measure::reference::STEEL,
        f64::INFINITY,
        "harder than steel (above 5.5)",
    ),
];

/// Answer bins for specific-gravity questions, spaced to split the base's
/// light clays, ordinary silicates, heavy silicates and ore minerals.
pub const SG_BINS: [(f64, f64, &str); 6] = [
    (f64::NEG_INFINITY, 2.45, "below 2.45"),
    (2.45, 2.7, "2.45 to 2.7"),
    (2.7, 2.95, "2.7 to 2.95"),
    (2.95, 3.3, "2.95 to 3.3"),
    (3.3, 4.2, "3.3 to 4.2"),
    (4.2, f64::INFINITY, "above 4.2"),
];

/// Likelihood of every answer of one property, per entry.
#[derive(Clone, Debug)]
pub(crate) struct AnswerTable {
    /// `p[entry][answer]`; each row sums to 1.
    pub p: Vec<Vec<f64>>,
    /// `ln p[entry][answer]`, so scoring a categorical answer takes no `ln`.
    pub ln_p: Vec<Vec<f64>>,
    /// Answer labels (contract values for categorical properties).
    pub answers: Vec<String>,
    /// The outside model's score for a categorical observation.
    pub outside: f64,
}

/// Scoring state built once from a base.
#[derive(Clone, Debug)]
pub struct Engine {
    pub(crate) base: Base,
    /// Entry ids, shared into every response without copying.
    pub(crate) ids: Vec<Arc<str>>,
    /// Entry names, likewise.
    pub(crate) names: Vec<Arc<str>>,
    /// ln prior per entry, already scaled by `1 − OUTSIDE_PRIOR`.
    pub(crate) log_prior: Vec<f64>,
    /// One table per property, indexed by position in [`Property::ALL`].
    pub(crate) tables: Vec<AnswerTable>,
    /// Median width of the entries' hardness ranges (the outside entry's).
    pub(crate) hardness_width: f64,
    /// Median width of the entries' SG ranges.
    pub(crate) sg_width: f64,
}

fn prop_index(p: Property) -> usize {
    Property::ALL.iter().position(|q| *q == p).unwrap_or(0)
}

fn categorical_row<T: Vocab>(values: &Values<T>, eps: f64) -> Vec<f64> {
    let k = T::ALL.len() as f64;
    let w: Vec<f64> = T::ALL
        .iter()
        .map(|v| {
            if values.is_typical(v) {
                TYPICAL_WEIGHT
            } else if values.is_occasional(v) {
                OCCASIONAL_WEIGHT
            } else {
                0.0
            }
        })
        .collect();
    let total: f64 = w.iter().sum();
    w.iter()
        .map(|x| (1.0 - eps) * x / total.max(f64::MIN_POSITIVE) + eps / k)
        .collect()
}

fn bool_values(v: &Values<bool>) -> Values<YesNo> {
    Values {
        typical: v.typical.iter().map(|b| YesNo::from(*b)).collect(),
        occasional: v.occasional.iter().map(|b| YesNo::from(*b)).collect(),
    }
}

fn median(mut xs: Vec<f64>) -> f64 {
    xs.sort_by(f64::total_cmp);
    match xs.len() {
        0 => 0.0,
        n if n % 2 == 1 => xs[n / 2],
        n => 0.5 * (xs[n / 2 - 1] + xs[n / 2]),
    }
}

/// Spread of a grossly wrong hardness reading (one standard deviation,
/// Mohs): the heavy tail of the reading error.
pub const HARDNESS_GROSS_SIGMA: f64 = 1.5;
/// Spread of a grossly wrong specific gravity (a piece with matrix, pores or
/// bubbles): the heavy tail of the weighing error.
pub const SG_GROSS_SIGMA: f64 = 0.5;

/// Hardness likelihood of an observed interval for an entry range: a
/// careful reading mixed with a grossly wrong one, both in closed form.
pub(crate) fn hardness_likelihood(obs: Interval, lo: f64, hi: f64) -> f64 {
    (1.0 - HARDNESS_GROSS_ERROR) * measure::interval_probability(obs, lo, hi, HARDNESS_SIGMA)
        + HARDNESS_GROSS_ERROR * measure::interval_probability(obs, lo, hi, HARDNESS_GROSS_SIGMA)
}

/// Specific-gravity likelihood of an observed interval for an entry range.
pub(crate) fn sg_likelihood(obs: Interval, sigma: f64, lo: f64, hi: f64) -> f64 {
    (1.0 - SG_GROSS_ERROR) * measure::interval_probability(obs, lo, hi, sigma)
        + SG_GROSS_ERROR * measure::interval_probability(obs, lo, hi, SG_GROSS_SIGMA.max(sigma))
}

fn row_for(p: Property, e: &Entry) -> Vec<f64> {
    let eps = observer_error(p);
    match p {
        Property::Cleavage => categorical_row(&e.cleavage, eps),
        Property::Tenacity => categorical_row(&e.tenacity, eps),
        Property::Colour => categorical_row(&e.colour, eps),
        Property::Luster => categorical_row(&e.luster, eps),
        Property::Habit => categorical_row(&e.habit, eps),
        Property::Feel => categorical_row(&e.feel, eps),
        Property::WetBehaviour => categorical_row(&e.wet_behaviour, eps),
        Property::Streak => categorical_row(&e.streak, eps),
        Property::Diaphaneity => categorical_row(&e.diaphaneity, eps),
        Property::Magnetic => categorical_row(&bool_values(&e.magnetic), eps),
        Property::AcidReaction => categorical_row(&bool_values(&e.acid_reaction), eps),
        Property::Setting => categorical_row(&e.setting, eps),
        Property::Hardness => HARDNESS_BINS
            .iter()
            .map(|(lo, hi, _)| {
                hardness_likelihood(
                    Interval { lo: *lo, hi: *hi },
                    e.hardness.min,
                    e.hardness.max,
                )
            })
            .collect(),
        Property::SpecificGravity => SG_BINS
            .iter()
            .map(|(lo, hi, _)| {
                sg_likelihood(
                    Interval { lo: *lo, hi: *hi },
                    SG_VALUE_SIGMA,
                    e.specific_gravity.min,
                    e.specific_gravity.max,
                )
            })
            .collect(),
    }
}

fn answer_labels(p: Property) -> Vec<String> {
    fn names<T: Vocab>() -> Vec<String> {
        T::ALL.iter().map(|v| v.as_str().to_string()).collect()
    }
    use crate::base::vocab::*;
    match p {
        Property::Cleavage => names::<Cleavage>(),
        Property::Tenacity => names::<Tenacity>(),
        Property::Colour => names::<Colour>(),
        Property::Luster => names::<Luster>(),
        Property::Habit => names::<Habit>(),
        Property::Feel => names::<Feel>(),
        Property::WetBehaviour => names::<WetBehaviour>(),
        Property::Streak => names::<Streak>(),
        Property::Diaphaneity => names::<Diaphaneity>(),
        Property::Magnetic | Property::AcidReaction => names::<YesNo>(),
        Property::Setting => names::<Setting>(),
        Property::Hardness => HARDNESS_BINS.iter().map(|b| b.2.to_string()).collect(),
        Property::SpecificGravity => SG_BINS.iter().map(|b| b.2.to_string()).collect(),
    }
}

/// An observation prepared for scoring.
enum Scored {
    /// One index into the property's vocabulary.
    Cat(usize),
    /// Several indices (colours).
    Cats(Vec<usize>),
    /// A Mohs interval.
    Hardness(Interval),
    /// A specific-gravity interval and its measurement error.
    Sg(Interval, f64),
}

impl Engine {
    /// Builds the likelihood tables for a (validated) base.
    pub fn new(base: &Base) -> Engine {
        let total_prior: f64 = base.entries.iter().map(|e| e.prior).sum();
        let log_prior = base
            .entries
            .iter()
            .map(|e| ((1.0 - OUTSIDE_PRIOR) * e.prior / total_prior).ln())
            .collect();
        let tables = Property::ALL
            .iter()
            .map(|&p| {
                let rows: Vec<Vec<f64>> = base.entries.iter().map(|e| row_for(p, e)).collect();
                // The outside model: as well as a typical match of a middling entry.
                let outside = median(
                    base.entries
                        .iter()
                        .zip(&rows)
                        .map(|(e, row)| typical_mean(p, e, row))
                        .collect(),
                );
                AnswerTable {
                    ln_p: rows
                        .iter()
                        .map(|r| r.iter().map(|x| x.max(f64::MIN_POSITIVE).ln()).collect())
                        .collect(),
                    p: rows,
                    answers: answer_labels(p),
                    outside,
                }
            })
            .collect();
        Engine {
            base: base.clone(),
            ids: base
                .entries
                .iter()
                .map(|e| Arc::from(e.id.as_str()))
                .collect(),
            names: base
                .entries
                .iter()
                .map(|e| Arc::from(e.name.as_str()))
                .collect(),
            log_prior,
            tables,
            hardness_width: median(
                base.entries
                    .iter()
                    .map(|e| e.hardness.max - e.hardness.min)
                    .collect(),
            )
            .max(0.5),
            sg_width: median(
                base.entries
                    .iter()
                    .map(|e| e.specific_gravity.max - e.specific_gravity.min)
                    .collect(),
            )
            .max(0.1),
        }
    }

    /// The engine over the base compiled into this binary, built once.
    pub fn builtin() -> &'static Engine {
        static ENGINE: std::sync::LazyLock<Engine> =
            std::sync::LazyLock::new(|| Engine::new(crate::base::builtin()));
        &ENGINE
    }

    /// The base this engine scores against.
    pub fn base(&self) -> &Base {
        &self.base
    }

    pub(crate) fn table(&self, p: Property) -> &AnswerTable {
        &self.tables[prop_index(p)]
    }

    fn prepare(
        &self,
        o: &Observations,
        derived: &mut Derived,
        notes: &mut Vec<String>,
    ) -> Vec<(Property, Scored)> {
        use crate::base::vocab::Vocab as _;
        let mut out = Vec::new();
        let mut cat = |p: Property, idx: Option<usize>| {
            if let Some(i) = idx {
                out.push((p, Scored::Cat(i)));
            }
        };
        cat(Property::Cleavage, o.cleavage.map(|v| v.index()));
        cat(Property::Tenacity, o.tenacity.map(|v| v.index()));
        cat(Property::Luster, o.luster.map(|v| v.index()));
        cat(Property::Habit, o.habit.map(|v| v.index()));
        cat(Property::Feel, o.feel.map(|v| v.index()));
        cat(Property::WetBehaviour, o.wet_behaviour.map(|v| v.index()));
        cat(Property::Streak, o.streak.map(|v| v.index()));
        cat(Property::Diaphaneity, o.diaphaneity.map(|v| v.index()));
        cat(
            Property::Magnetic,
            o.magnetic.map(|v| YesNo::from(v).index()),
        );
        cat(
            Property::AcidReaction,
            o.acid_reaction.map(|v| YesNo::from(v).index()),
        );
        cat(Property::Setting, o.setting.map(|v| v.index()));
        if let Some(colours) = &o.colour
            && !colours.is_empty()
        {
            out.push((
                Property::Colour,
                Scored::Cats(colours.iter().map(|c| c.index()).collect()),
            ));
        }
        if let Some(h) = measure::hardness_reading(o) {
            derived.hardness = Some([
                h.interval.lo.is_finite().then_some(h.interval.lo),
                h.interval.hi.is_finite().then_some(h.interval.hi),
            ]);
            if let Some(c) = h.conflict {
                notes.push(c);
            }
            out.push((Property::Hardness, Scored::Hardness(h.interval)));
        }
        if let Some(sg) = &o.specific_gravity {
            let (value, half, sigma, unc) = match sg {
                SgObs::Value(v) => (*v, SG_VALUE_HALF_WIDTH, SG_VALUE_SIGMA, SG_VALUE_SIGMA),
                SgObs::Weighings(w) => {
                    let r = measure::sg_from_weighings(w);
                    (r.value, 0.005, r.sigma, r.sigma)
                }
            };
            derived.specific_gravity = Some(SgDerived {
                value,
                uncertainty: unc,
            });
            out.push((
                Property::SpecificGravity,
                Scored::Sg(
                    Interval {
                        lo: value - half,
                        hi: value + half,
                    },
                    sigma,
                ),
            ));
        }
        out
    }

    /// Natural-log likelihood of one observation for every entry, written
    /// into `out` (one slot per entry); returns the outside model's.
    fn log_likelihoods(&self, p: Property, s: &Scored, out: &mut [f64]) -> f64 {
        let ln = |x: f64| x.max(f64::MIN_POSITIVE).ln();
        match s {
            Scored::Cat(i) => {
                let t = self.table(p);
                for (slot, row) in out.iter_mut().zip(&t.ln_p) {
                    *slot = row.get(*i).copied().unwrap_or(f64::MIN_POSITIVE.ln());
                }
                ln(OUTSIDE_MATCH_FACTOR * t.outside)
            }
            Scored::Cats(idx) => {
                // Several colours describe one specimen together: the
                // geometric mean asks the entry to explain every one of them
                // without penalising a longer description.
                let t = self.table(p);
                let n = idx.len().max(1) as f64;
                for (slot, row) in out.iter_mut().zip(&t.ln_p) {
                    *slot = idx
                        .iter()
                        .map(|&i| row.get(i).copied().unwrap_or(f64::MIN_POSITIVE.ln()))
                        .sum::<f64>()
                        / n;
                }
                ln(OUTSIDE_MATCH_FACTOR * t.outside)
            }
            Scored::Hardness(iv) => {
                for (slot, e) in out.iter_mut().zip(&self.base.entries) {
                    *slot = ln(hardness_likelihood(*iv, e.hardness.min, e.hardness.max));
                }
                // A mineral that fits: a range of typical width inside what was seen.
                let (a, b) = virtual_range(*iv, self.hardness_width, 1.0, 10.0);
                ln(OUTSIDE_MATCH_FACTOR * hardness_likelihood(*iv, a, b))
            }
            Scored::Sg(iv, sigma) => {
                for (slot, e) in out.iter_mut().zip(&self.base.entries) {
                    *slot = ln(sg_likelihood(
                        *iv,
                        *sigma,
                        e.specific_gravity.min,
                        e.specific_gravity.max,
                    ));
                }
                let (a, b) = virtual_range(*iv, self.sg_width, 1.0, 8.0);
                ln(OUTSIDE_MATCH_FACTOR * sg_likelihood(*iv, *sigma, a, b))
            }
        }
    }

    /// Scores every entry against the observations (which must have passed
    /// [`Observations::validate`]; unvalidated numbers are still scored
    /// without panicking).
    pub fn identify(&self, o: &Observations) -> Identification {
        let n = self.base.entries.len();
        let mut derived = Derived::default();
        let mut notes = Vec::new();
        let prepared = self.prepare(o, &mut derived, &mut notes);

        let mut log_post: Vec<f64> = self.log_prior.clone();
        let mut log_out = OUTSIDE_PRIOR.ln();
        // evidence[i * k + j]: bits of observation j for entry i.
        let k = prepared.len();
        let mut evidence = vec![0.0; n * k];
        let mut ln_l = vec![0.0; n];
        for (j, (p, s)) in prepared.iter().enumerate() {
            let ln_out = self.log_likelihoods(*p, s, &mut ln_l);
            log_out += ln_out;
            for (i, l) in ln_l.iter().enumerate() {
                log_post[i] += l;
                evidence[i * k + j] = (l - ln_out) / std::f64::consts::LN_2;
            }
        }
        let max = log_post.iter().copied().fold(log_out, f64::max);
        let weights: Vec<f64> = log_post.iter().map(|l| (l - max).exp()).collect();
        let w_out = (log_out - max).exp();
        let z: f64 = weights.iter().sum::<f64>() + w_out;
        let probs: Vec<f64> = weights.iter().map(|w| w / z).collect();
        let outside_base = w_out / z;

        let mut order: Vec<usize> = (0..n).collect();
        order.sort_by(|&a, &b| {
            probs[b]
                .total_cmp(&probs[a])
                .then_with(|| self.base.entries[a].id.cmp(&self.base.entries[b].id))
        });
        let candidates: Vec<Candidate> = order
            .iter()
            .map(|&i| {
                let e = &self.base.entries[i];
                let ev = || {
                    prepared
                        .iter()
                        .zip(&evidence[i * k..(i + 1) * k])
                        .map(|((p, _), b)| (*p, *b))
                };
                Candidate {
                    id: self.ids[i].clone(),
                    name: self.names[i].clone(),
                    probability: probs[i],
                    sheet_silicate: e.sheet_silicate,
                    group: e.group,
                    agrees: ev()
                        .filter(|(_, b)| *b > AGREE_BITS)
                        .map(|(p, _)| p)
                        .collect(),
                    conflicts: ev()
                        .filter(|(_, b)| *b < CONFLICT_BITS)
                        .map(|(p, _)| p)
                        .collect(),
                    evidence: ev()
                        .map(|(p, b)| Evidence {
                            property: p,
                            bits: (b * 1000.0).round() / 1000.0,
                        })
                        .collect(),
                }
            })
            .collect();

        let mut groups: Vec<GroupProbability> = Group::ALL
            .iter()
            .map(|g| GroupProbability {
                id: *g,
                probability: candidates
                    .iter()
                    .filter(|c| c.group == *g)
                    .map(|c| c.probability)
                    .sum(),
            })
            .collect();
        groups.sort_by(|a, b| {
            b.probability
                .total_cmp(&a.probability)
                .then(a.id.cmp(&b.id))
        });

        let next_questions = self.next_questions(o, &probs);
        let (separating_test, no_hand_test) = self.separating_test(o, &order, &probs);
        let cautions = super::cautions::cautions(&self.base, &candidates, o);
        let laboratory = self.laboratory(&candidates, separating_test.as_ref());

        Identification {
            candidates,
            groups,
            outside_base,
            next_questions,
            cautions,
            base_version: self.base.version.clone(),
            observation_conflicts: notes,
            separating_test,
            no_hand_test,
            laboratory,
            derived,
        }
    }

    /// The one-line laboratory note when the two leaders stay close and no
    /// hand test separates them well.
    fn laboratory(
        &self,
        candidates: &[Candidate],
        sep: Option<&super::result::SeparatingTest>,
    ) -> Option<String> {
        let (first, second) = (candidates.first()?, candidates.get(1)?);
        let close = second.probability > 0.15 && first.probability < 4.0 * second.probability;
        let weak_test = sep.is_none_or(|s| s.expected_gain_bits < 0.3);
        if !(close && weak_test) {
            return None;
        }
        [first, second]
            .iter()
            .filter_map(|c| self.base.entry(&c.id))
            .map(|e| e.lab.trim())
            .find(|l| !l.is_empty())
            .map(str::to_string)
    }
}

/// Mean likelihood of an entry's typical values (for categorical
/// properties), the yardstick of "a matching entry".
fn typical_mean(p: Property, e: &Entry, row: &[f64]) -> f64 {
    fn mean<T: Vocab>(v: &Values<T>, row: &[f64]) -> f64 {
        let n = v.typical.len().max(1) as f64;
        v.typical
            .iter()
            .map(|t| row.get(t.index()).copied().unwrap_or(0.0))
            .sum::<f64>()
            / n
    }
    match p {
        Property::Cleavage => mean(&e.cleavage, row),
        Property::Tenacity => mean(&e.tenacity, row),
        Property::Colour => mean(&e.colour, row),
        Property::Luster => mean(&e.luster, row),
        Property::Habit => mean(&e.habit, row),
        Property::Feel => mean(&e.feel, row),
        Property::WetBehaviour => mean(&e.wet_behaviour, row),
        Property::Streak => mean(&e.streak, row),
        Property::Diaphaneity => mean(&e.diaphaneity, row),
        Property::Magnetic => mean(&bool_values(&e.magnetic), row),
        Property::AcidReaction => mean(&bool_values(&e.acid_reaction), row),
        Property::Setting => mean(&e.setting, row),
        // Intervals get their outside score from a virtual range instead.
        Property::Hardness | Property::SpecificGravity => 0.0,
    }
}

/// A range of `width`, centred in the observed interval and clipped to the
/// scale: the hardness or SG of a mineral that fits what was seen.
fn virtual_range(iv: Interval, width: f64, lo: f64, hi: f64) -> (f64, f64) {
    let a = iv.lo.max(lo).min(hi);
    let b = iv.hi.min(hi).max(lo);
    let (a, b) = if a <= b { (a, b) } else { (b, a) };
    let mid = 0.5 * (a + b);
    let half = 0.5 * width.min(b - a).max(0.0);
    (mid - half, mid + half)
}
