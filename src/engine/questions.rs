//! Which test to do next: the expected reduction of the posterior entropy
//! over the base entries, for every unanswered property.
//!
//! For property `q` with answers `a`, `P(a) = Σₑ π(e) P(a | e)` and the gain
//! is `H(π) − Σₐ P(a) H(π | a)`, in bits. Hardness is asked as the bins a
//! fingernail, copper and steel can tell apart; specific gravity as bins
//! that split the base's light, ordinary, heavy and ore minerals.

use super::Property;
use super::model::Engine;
use super::observe::Observations;
use super::result::{Outcome, Question, SeparatingTest};

/// Entropy in bits of a (possibly unnormalised) weight vector.
fn entropy_bits(w: impl Iterator<Item = f64> + Clone) -> f64 {
    let z: f64 = w.clone().sum();
    if z <= 0.0 {
        return 0.0;
    }
    -w.filter(|x| *x > 0.0)
        .map(|x| {
            let p = x / z;
            p * p.log2()
        })
        .sum::<f64>()
}

impl Engine {
    /// Expected information gain (bits) of asking `p`, for the weights `w`
    /// over the entries named by `entries` (indices into the base).
    pub(crate) fn expected_gain(&self, p: Property, entries: &[usize], w: &[f64]) -> f64 {
        let z: f64 = w.iter().sum();
        if z <= 0.0 {
            return 0.0;
        }
        let h_now = entropy_bits(w.iter().copied());
        let t = self.table(p);
        let answers = t.answers.len();
        // Σₐ P(a) H(π|a) = −Σₐ Σₑ (wₑ Lₑₐ / z) log2(wₑ Lₑₐ / Σₑ wₑ Lₑₐ)
        let mut expected_h = 0.0;
        for a in 0..answers {
            let joint: Vec<f64> = entries
                .iter()
                .zip(w)
                .map(|(&e, &we)| we * t.p[e][a])
                .collect();
            let pa: f64 = joint.iter().sum();
            if pa <= 0.0 {
                continue;
            }
            expected_h += (pa / z) * entropy_bits(joint.iter().copied());
        }
        (h_now - expected_h).max(0.0)
    }

    /// Every unanswered property, most informative first.
    pub(crate) fn next_questions(&self, o: &Observations, probs: &[f64]) -> Vec<Question> {
        let all: Vec<usize> = (0..probs.len()).collect();
        let mut qs: Vec<Question> = Property::ALL
            .iter()
            .filter(|p| !p.is_observed(o))
            .map(|&p| Question {
                property: p,
                expected_gain_bits: round3(self.expected_gain(p, &all, probs)),
                how: p.how().to_string(),
            })
            .collect();
        qs.sort_by(|a, b| {
            b.expected_gain_bits
                .total_cmp(&a.expected_gain_bits)
                .then(a.property.cmp(&b.property))
        });
        qs
    }

    /// The unanswered test that best separates the two leaders, with the
    /// outcomes that favour each most strongly.
    pub(crate) fn separating_test(
        &self,
        o: &Observations,
        order: &[usize],
    ) -> Option<SeparatingTest> {
        let (&i, &j) = (order.first()?, order.get(1)?);
        let pair = [i, j];
        // Equal weights: how well a test tells these two apart, whatever
        // their current odds (a lopsided pair would rank every test near zero).
        let w = [0.5, 0.5];
        let (p, gain) = Property::ALL
            .iter()
            .filter(|p| !p.is_observed(o))
            .map(|&p| (p, self.expected_gain(p, &pair, &w)))
            .max_by(|a, b| a.1.total_cmp(&b.1))?;
        if gain <= 1e-6 {
            return None;
        }
        let t = self.table(p);
        let entries = &self.base.entries;
        let mut outcomes: Vec<Outcome> = t
            .answers
            .iter()
            .enumerate()
            .filter(|(a, _)| t.p[i][*a].max(t.p[j][*a]) >= 0.05)
            .map(|(a, label)| {
                let (li, lj) = (t.p[i][a], t.p[j][a]);
                let (fav, ratio) = if li >= lj { (i, li / lj) } else { (j, lj / li) };
                Outcome {
                    answer: label.clone(),
                    favours: entries[fav].id.clone(),
                    ratio: (ratio * 10.0).round() / 10.0,
                }
            })
            .filter(|oc| oc.ratio >= 2.0)
            .collect();
        outcomes.sort_by(|a, b| b.ratio.total_cmp(&a.ratio));
        outcomes.truncate(4);
        Some(SeparatingTest {
            first: entries[i].id.clone(),
            second: entries[j].id.clone(),
            property: p,
            expected_gain_bits: round3(gain),
            how: p.how().to_string(),
            outcomes,
        })
    }
}

impl Engine {
    /// The probability of each answer to `p` under the posterior over the
    /// entries in `id` (the outside entry left out, as in the gain): what
    /// the pages show as "what each outcome would mean".
    pub fn predictive(&self, id: &super::Identification, p: Property) -> Vec<(String, f64)> {
        let t = self.table(p);
        let mut w = vec![0.0; self.base.entries.len()];
        for c in &id.candidates {
            if let Some(i) = self.base.index_of(&c.id) {
                w[i] = c.probability;
            }
        }
        let z: f64 = w.iter().sum();
        t.answers
            .iter()
            .enumerate()
            .map(|(a, label)| {
                let pa: f64 = w.iter().zip(&t.p).map(|(we, row)| we * row[a]).sum();
                (label.clone(), if z > 0.0 { pa / z } else { 0.0 })
            })
            .collect()
    }
}

fn round3(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn entropy_of_a_fair_coin_is_one_bit() {
        assert!((entropy_bits([1.0, 1.0].into_iter()) - 1.0).abs() < 1e-12);
        assert!((entropy_bits([3.0, 3.0, 3.0, 3.0].into_iter()) - 2.0).abs() < 1e-12);
        assert_eq!(entropy_bits([0.0, 5.0].into_iter()), 0.0);
    }
}
