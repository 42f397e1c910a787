//! Which test to do next: the expected reduction of the posterior entropy
//! over the base entries, for every unanswered property.
//!
//! For property `q` with answers `a`, `P(a) = Σₑ π(e) P(a | e)` and the gain
//! is `H(π) − Σₐ P(a) H(π | a)`, in bits. Hardness is asked as the bins a
//! fingernail, copper and steel can tell apart; specific gravity as bins
//! that split the base's light, ordinary, heavy and ore minerals.

use super::Property;
use super::lookalikes::{self, Shows};
use super::model::{Engine, HARDNESS_BINS, SG_BINS};
use super::observe::Observations;
use super::result::{NoHandTest, Outcome, Question, SeparatingTest};

/// A separating test is offered only between the leader and a second
/// candidate at least a tenth as probable (one rule, chosen over a fixed
/// floor such as 5 %, because it reads the same whatever the number of
/// candidates). A judgement: odds beyond ten to one are already decided for
/// practical purposes, and a single typical-against-untypical observation
/// in the model moves the odds by about that much, so a pair further apart
/// would need the test to go against the rest of the evidence to matter.
pub const PLAUSIBLE_RATIO: f64 = 10.0;

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
    /// outcomes that favour each; or, when nothing either typically shows
    /// tells them apart, the note that no hand test does. Both only when
    /// the two are plausible ([`PLAUSIBLE_RATIO`]); which tests count is
    /// [`lookalikes::contrast`], the rule the reference pages use.
    pub(crate) fn separating_test(
        &self,
        o: &Observations,
        order: &[usize],
        probs: &[f64],
    ) -> (Option<SeparatingTest>, Option<NoHandTest>) {
        let (Some(&i), Some(&j)) = (order.first(), order.get(1)) else {
            return (None, None);
        };
        let (pi, pj) = (
            probs.get(i).copied().unwrap_or(0.0),
            probs.get(j).copied().unwrap_or(0.0),
        );
        if !plausible_pair(pi, pj) {
            return (None, None);
        }
        let entries = &self.base.entries;
        let tests = lookalikes::all_separators(self, i, j);
        if tests.is_empty() {
            let lab = [i, j]
                .iter()
                .map(|&k| entries[k].lab.trim())
                .find(|l| !l.is_empty())
                .map(str::to_string);
            return (
                None,
                Some(NoHandTest {
                    first: entries[i].id.clone(),
                    second: entries[j].id.clone(),
                    laboratory: lab,
                }),
            );
        }
        // The best test not made yet; once every separating test has been
        // made, the probabilities already say what they can.
        let Some(sep) = tests.into_iter().find(|s| !s.property.is_observed(o)) else {
            return (None, None);
        };
        let p = sep.property;
        let pair = [i, j];
        // Equal weights: how well a test tells these two apart, whatever
        // their current odds.
        let gain = self.expected_gain(p, &pair, &[0.5, 0.5]);
        let t = self.table(p);
        let ratio = |a: usize, fav: usize, other: usize| {
            // Every row has the observer-error floor, so `lo` is never 0.
            let (lf, lo) = (t.p[fav][a], t.p[other][a].max(1e-12));
            (lf / lo * 10.0).round() / 10.0
        };
        let mut outcomes: Vec<Outcome> = Vec::new();
        match (&sep.this, &sep.other) {
            (Shows::Values(a), Shows::Values(b)) => {
                for (mine, theirs, fav, other) in [(a, b, i, j), (b, a, j, i)] {
                    for v in mine.iter().filter(|v| !theirs.contains(v)) {
                        if let Some(k) = t.answers.iter().position(|x| x == v.value) {
                            outcomes.push(Outcome {
                                answer: v.value.to_string(),
                                favours: entries[fav].id.clone(),
                                ratio: ratio(k, fav, other),
                            });
                        }
                    }
                }
            }
            (this, other) => {
                // Ranges: the answer bin around the middle of each range.
                for (shows, fav, oth) in [(this, i, j), (other, j, i)] {
                    let mid = match shows {
                        Shows::Hardness(r) | Shows::SpecificGravity(r) => 0.5 * (r.min + r.max),
                        Shows::Values(_) => continue,
                    };
                    let bins: &[(f64, f64, &str)] = if p == Property::Hardness {
                        &HARDNESS_BINS
                    } else {
                        &SG_BINS
                    };
                    if let Some(k) = bins.iter().position(|(lo, hi, _)| mid >= *lo && mid < *hi) {
                        outcomes.push(Outcome {
                            answer: shows.to_string(),
                            favours: entries[fav].id.clone(),
                            ratio: ratio(k, fav, oth),
                        });
                    }
                }
            }
        }
        (
            Some(SeparatingTest {
                first: entries[i].id.clone(),
                second: entries[j].id.clone(),
                property: p,
                expected_gain_bits: round3(gain),
                how: p.how().to_string(),
                outcomes,
                first_typical: sep.this.labels(),
                second_typical: sep.other.labels(),
            }),
            None,
        )
    }
}

/// Whether the second candidate is plausible enough beside the leader for a
/// separating test between them to be worth offering: within a factor of
/// [`PLAUSIBLE_RATIO`] of it.
pub fn plausible_pair(leader: f64, second: f64) -> bool {
    second > 0.0 && second * PLAUSIBLE_RATIO >= leader
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

    fn engine() -> &'static Engine {
        Engine::builtin()
    }

    /// The separating test between `a` (leader, probability `pa`) and `b`
    /// (`pb`) with observations `o`.
    fn between(
        o: &Observations,
        a: &str,
        pa: f64,
        b: &str,
        pb: f64,
    ) -> (Option<SeparatingTest>, Option<NoHandTest>) {
        let base = engine().base();
        let (i, j) = (
            base.index_of(a).expect("a in base"),
            base.index_of(b).expect("b in base"),
        );
        let mut probs = vec![0.0; base.entries.len()];
        probs[i] = pa;
        probs[j] = pb;
        engine().separating_test(o, &[i, j], &probs)
    }

    #[test]
    fn muscovite_and_lepidolite_are_separated_by_colour_with_lilac_for_lepidolite() {
        // Colour (lepidolite lilac to pink, muscovite colourless to silvery
        // grey) and the lithium-pegmatite setting are the textbook clues
        // (Klein & Dutrow, Manual of Mineral Science, lepidolite; Handbook of
        // Mineralogy, polylithionite sheet, colour; from memory). Feel is no
        // test: both are smooth, muscovite only occasionally soapy.
        let (sep, none) = between(
            &Observations::default(),
            "muscovite",
            0.6,
            "lepidolite",
            0.3,
        );
        assert!(none.is_none());
        let sep = sep.expect("a test");
        assert_eq!(sep.property, Property::Colour);
        assert!(
            sep.outcomes
                .iter()
                .any(|o| o.answer == "lilac" && o.favours == "lepidolite"),
            "{sep:?}"
        );
        assert!(sep.second_typical.contains("lilac"), "{sep:?}");
        // Even with colour already seen, feel is not offered instead.
        let seen = Observations {
            colour: Some(vec![crate::base::vocab::Colour::Grey]),
            ..Default::default()
        };
        let (sep, _) = between(&seen, "muscovite", 0.6, "lepidolite", 0.3);
        assert!(
            sep.as_ref().is_none_or(|s| s.property != Property::Feel),
            "{sep:?}"
        );
    }

    #[test]
    fn talc_and_pyrophyllite_get_no_hand_test_and_the_laboratory_note() {
        // Not separable in hand specimen; XRD or the cobalt nitrate test
        // separates them (Klein & Dutrow, Manual of Mineral Science,
        // pyrophyllite; from memory). The note comes from the base's `lab`.
        let (sep, none) = between(&Observations::default(), "talc", 0.6, "pyrophyllite", 0.3);
        assert!(sep.is_none(), "{sep:?}");
        let none = none.expect("said plainly");
        assert_eq!(
            (none.first.as_str(), none.second.as_str()),
            ("talc", "pyrophyllite")
        );
        assert!(
            none.laboratory
                .as_deref()
                .is_some_and(|l| l.contains("XRD")),
            "{none:?}"
        );
    }

    #[test]
    fn chlorite_and_biotite_are_separated_by_tenacity_then_streak() {
        // Biotite flakes elastic, chlorite flakes flexible and inelastic;
        // chlorite's streak pale green, biotite's white to grey (Handbook of
        // Mineralogy, clinochlore and annite sheets, tenacity and streak;
        // Klein & Dutrow, Manual of Mineral Science, chlorite: "flexible but
        // not elastic"; from memory).
        let (sep, _) = between(&Observations::default(), "chlorite", 0.5, "biotite", 0.4);
        let sep = sep.expect("a test");
        assert_eq!(sep.property, Property::Tenacity);
        assert!(
            sep.outcomes
                .iter()
                .any(|o| o.answer == "elastic" && o.favours == "biotite")
        );
        assert!(
            sep.outcomes
                .iter()
                .any(|o| o.answer == "flexible" && o.favours == "chlorite")
        );
        // Tenacity and colour made: streak is next, greenish for chlorite.
        let seen = Observations {
            tenacity: Some(crate::base::vocab::Tenacity::Flexible),
            colour: Some(vec![crate::base::vocab::Colour::DarkGreen]),
            ..Default::default()
        };
        let sep = between(&seen, "chlorite", 0.5, "biotite", 0.4)
            .0
            .expect("a test");
        assert_eq!(sep.property, Property::Streak);
        assert!(
            sep.outcomes
                .iter()
                .any(|o| o.answer == "greenish" && o.favours == "chlorite")
        );
        assert!(sep.outcomes.iter().all(|o| o.answer != "white"), "{sep:?}");
    }

    #[test]
    fn no_test_is_offered_against_an_implausible_second() {
        // Chlorite at 98 % against antigorite at 0.1 %: nothing to separate.
        assert_eq!(
            between(
                &Observations::default(),
                "chlorite",
                0.98,
                "antigorite",
                0.001
            ),
            (None, None)
        );
        // Nor a talc at 90 % against a pyrophyllite at 5 %: no "no test" note.
        assert_eq!(
            between(&Observations::default(), "talc", 0.9, "pyrophyllite", 0.05),
            (None, None)
        );
        // The rule's edge: a tenth of the leader is plausible, less is not.
        assert!(plausible_pair(0.5, 0.05));
        assert!(!plausible_pair(0.5, 0.049));
        assert!(!plausible_pair(0.5, 0.0));
        assert!(
            between(&Observations::default(), "chlorite", 0.5, "biotite", 0.05)
                .0
                .is_some()
        );
    }

    #[test]
    fn a_pale_mica_is_never_told_from_lepidolite_by_an_occasional_feel() {
        // The case reported: a colourless, silvery mica with the usual tests
        // made got "feel: soapy favours muscovite 6 to 1" against a
        // lepidolite at 6 %. Now lepidolite is not plausible beside a
        // muscovite at over 90 %, so nothing is offered.
        let read =
            |json: &str| -> Observations { serde_json::from_str(json).expect("observations") };
        let pale = r#""cleavage":"one_perfect","tenacity":"elastic","luster":"pearly","habit":"books",
            "streak":"white","hardness":{"min":2.5,"max":3},"setting":"pegmatite""#;
        let id = engine().identify(&read(&format!(
            r#"{{{pale},"colour":["colourless","silvery"]}}"#
        )));
        assert_eq!(&*id.candidates[0].id, "muscovite");
        assert!(!plausible_pair(
            id.candidates[0].probability,
            id.candidates[1].probability
        ));
        assert_eq!(id.separating_test, None);
        assert_eq!(id.no_hand_test, None);
        // Without the colour the leaders stay close; the test offered is
        // one of typical values, and every outcome is typical of the
        // candidate it favours.
        let id = engine().identify(&read(&format!("{{{pale}}}")));
        let sep = id.separating_test.as_ref().expect("the leaders stay close");
        assert_ne!(sep.property, Property::Feel, "{sep:?}");
        let base = engine().base();
        for oc in &sep.outcomes {
            let e = base.entry(&oc.favours).expect("in base");
            assert!(
                lookalikes::typical(e, sep.property)
                    .to_string()
                    .contains(&oc.answer),
                "{oc:?}"
            );
        }
    }

    #[test]
    fn entropy_of_a_fair_coin_is_one_bit() {
        assert!((entropy_bits([1.0, 1.0].into_iter()) - 1.0).abs() < 1e-12);
        assert!((entropy_bits([3.0, 3.0, 3.0, 3.0].into_iter()) - 2.0).abs() < 1e-12);
        assert_eq!(entropy_bits([0.0, 5.0].into_iter()), 0.0);
    }
}
