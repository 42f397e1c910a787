//! View models shared by the pages: what a template needs, computed from
//! the domain types in one place (display text comes from the vocabulary's
//! labels, never from templates).

use crate::base::vocab::{
    Cleavage, Colour, Diaphaneity, Feel, Habit, Luster, Setting, Streak, Tenacity, Vocab,
    WetBehaviour,
};
use crate::engine::observe::SgObs;
use crate::engine::result::CautionCode;
use crate::engine::{Identification, Observations, Property};

use super::forms::FieldMessages;

/// A candidate as the bars show it.
pub struct LeaderView {
    /// Entry id (or `outside` for the outside-the-base entry).
    pub id: String,
    /// Name.
    pub name: String,
    /// Probability 0..1, as the marker attribute carries it.
    pub probability: String,
    /// Width of the bar, 0..100.
    pub bar: String,
    /// Probability for people ("83 %", "< 1 %").
    pub percent: String,
}

/// Percent for people: whole percent, "< 1 %" below one.
pub fn percent(p: f64) -> String {
    if p < 0.005 {
        "< 1 %".to_string()
    } else if p > 0.995 {
        "> 99 %".to_string()
    } else {
        format!("{:.0} %", p * 100.0)
    }
}

fn bar(p: f64) -> String {
    format!("{:.1}", (p * 100.0).clamp(0.0, 100.0))
}

/// The leading `n` candidates.
pub fn leaders(id: &Identification, n: usize) -> Vec<LeaderView> {
    id.candidates
        .iter()
        .take(n)
        .map(|c| LeaderView {
            id: c.id.to_string(),
            name: c.name.to_string(),
            probability: format!("{:.4}", c.probability),
            bar: bar(c.probability),
            percent: percent(c.probability),
        })
        .collect()
}

/// The outside-the-base entry as a bar.
pub fn outside(id: &Identification) -> LeaderView {
    LeaderView {
        id: "outside".to_string(),
        name: "None of these (outside the base)".to_string(),
        probability: format!("{:.4}", id.outside_base),
        bar: bar(id.outside_base),
        percent: percent(id.outside_base),
    }
}

/// One recorded answer, with a link to change it.
pub struct AnswerView {
    /// Property label.
    pub label: &'static str,
    /// The answer in words.
    pub value: String,
    /// Where to change it.
    pub change_href: String,
}

fn yes_no(b: bool, yes: &str, no: &str) -> String {
    if b { yes.to_string() } else { no.to_string() }
}

fn num(x: f64) -> String {
    let s = format!("{x:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The observed value of a property, in words; `None` when not observed.
pub fn observed_text(o: &Observations, p: Property) -> Option<String> {
    match p {
        Property::Cleavage => o.cleavage.map(|v| v.label().to_string()),
        Property::Tenacity => o.tenacity.map(|v| v.label().to_string()),
        Property::Colour => o.colour.as_ref().map(|cs| crate::base::labels(cs)),
        Property::Luster => o.luster.map(|v| v.label().to_string()),
        Property::Habit => o.habit.map(|v| v.label().to_string()),
        Property::Feel => o.feel.map(|v| v.label().to_string()),
        Property::WetBehaviour => o.wet_behaviour.map(|v| v.label().to_string()),
        Property::Streak => o.streak.map(|v| v.label().to_string()),
        Property::Diaphaneity => o.diaphaneity.map(|v| v.label().to_string()),
        Property::Setting => o.setting.map(|v| v.label().to_string()),
        Property::Magnetic => o
            .magnetic
            .map(|b| yes_no(b, "pulled by the magnet", "not pulled by the magnet")),
        Property::AcidReaction => o
            .acid_reaction
            .map(|b| yes_no(b, "fizzes in acid", "no fizz in acid")),
        Property::Hardness => {
            if !o.has_hardness() {
                return None;
            }
            let mut parts = Vec::new();
            if let Some(h) = o.hardness {
                parts.push(match (h.min, h.max) {
                    (Some(a), Some(b)) if a == b => format!("Mohs {}", num(a)),
                    (Some(a), Some(b)) => format!("Mohs {}–{}", num(a), num(b)),
                    (Some(a), None) => format!("Mohs {} or more", num(a)),
                    (None, Some(b)) => format!("Mohs {} or less", num(b)),
                    (None, None) => String::new(),
                });
            }
            if let Some(s) = o.scratch {
                for (v, tool) in [
                    (s.fingernail, "fingernail"),
                    (s.copper, "copper"),
                    (s.steel, "steel"),
                ] {
                    if let Some(b) = v {
                        parts.push(if b {
                            format!("{tool} scratches it")
                        } else {
                            format!("{tool} does not scratch it")
                        });
                    }
                }
            }
            if let Some(g) = o.scratches_glass {
                parts.push(yes_no(g, "scratches glass", "does not scratch glass"));
            }
            Some(
                parts
                    .into_iter()
                    .filter(|s| !s.is_empty())
                    .collect::<Vec<_>>()
                    .join("; "),
            )
        }
        Property::SpecificGravity => o.specific_gravity.map(|sg| match sg {
            SgObs::Value(v) => format!("SG {}", num(v)),
            SgObs::Weighings(w) => {
                let r = crate::engine::measure::sg_from_weighings(&w);
                format!(
                    "SG {:.2} ± {:.2} (weighed {} g dry, {} g in water)",
                    r.value,
                    r.sigma,
                    num(w.dry_mass_g),
                    num(w.submerged_mass_g)
                )
            }
        }),
    }
}

/// Every recorded answer, in form order, linking to its question.
pub fn answers(o: &Observations, base_href: &str) -> Vec<AnswerView> {
    Property::ALL
        .iter()
        .filter_map(|&p| {
            observed_text(o, p).map(|value| AnswerView {
                label: p.label(),
                value,
                change_href: format!("{base_href}?q={}", p.as_str()),
            })
        })
        .collect()
}

/// A caution box.
pub struct CautionView {
    /// Heading.
    pub heading: &'static str,
    /// The contract code.
    pub code: &'static str,
    /// Plain words.
    pub message: String,
}

/// The one name of the asbestos hazard, on results, the question side
/// panel, the record page, the mineral pages and the mineral list.
pub const ASBESTOS_HEADING: &str = "Asbestos mineral";

/// The one name of the fine-dust hazard (results and mineral pages).
pub const DUST_HEADING: &str = "Fine dust";

/// The cautions of an identification.
pub fn cautions(id: &Identification) -> Vec<CautionView> {
    id.cautions
        .iter()
        .map(|c| {
            let (heading, code) = match c.code {
                CautionCode::Asbestos => (ASBESTOS_HEADING, "asbestos"),
                CautionCode::Acid => ("Acid", "acid"),
                CautionCode::Dust => (DUST_HEADING, "dust"),
            };
            CautionView {
                heading,
                code,
                message: c.message.clone(),
            }
        })
        .collect()
}

/// One choice of a radio or checkbox group.
pub struct Choice {
    /// Contract value.
    pub value: String,
    /// Label.
    pub label: String,
    /// Pre-selected.
    pub checked: bool,
}

/// A yes/no/not-tested row (scratch tools, glass, magnet, acid).
pub struct YesNoRow {
    /// Form field name.
    pub name: &'static str,
    /// What is asked.
    pub label: &'static str,
    /// Label of the yes answer.
    pub yes: &'static str,
    /// Label of the no answer.
    pub no: &'static str,
    /// "true", "false" or "" (not tested).
    pub value: String,
}

/// The inputs a question needs.
pub enum Inputs {
    /// Radio buttons (or checkboxes when `multiple`).
    Choices {
        /// Whether several may be ticked (colour).
        multiple: bool,
        /// The choices.
        choices: Vec<Choice>,
    },
    /// Yes/no radio buttons.
    YesNo(YesNoRow),
    /// Mohs numbers, scratch tests, glass.
    Hardness {
        /// `hardness_min` as typed.
        min: String,
        /// `hardness_max` as typed.
        max: String,
        /// Scratch tests and glass.
        rows: Vec<YesNoRow>,
    },
    /// A number, or two weighings.
    Sg {
        /// `specific_gravity` as typed.
        value: String,
        /// `dry_mass_g`.
        dry: String,
        /// `submerged_mass_g`.
        submerged: String,
        /// `balance_resolution_g`.
        resolution: String,
        /// `water_temp_c`.
        temp: String,
    },
}

/// The question a page asks, as a sentence.
pub fn question_sentence(p: Property) -> &'static str {
    match p {
        Property::Cleavage => "How does it split?",
        Property::Tenacity => "What does a thin flake do when you bend it?",
        Property::Hardness => "How hard is it?",
        Property::Colour => "What colour is it?",
        Property::Luster => "How does a fresh face shine?",
        Property::Habit => "How does it sit in the rock?",
        Property::Feel => "How does it feel between the fingers?",
        Property::WetBehaviour => "What does a pinch do with a drop of water?",
        Property::Streak => "What colour is its streak?",
        Property::Diaphaneity => "Does light pass through a thin edge?",
        Property::SpecificGravity => "How heavy is it for its size?",
        Property::Magnetic => "Does a hand magnet pull it?",
        Property::AcidReaction => "Does it fizz in dilute acid?",
        Property::Setting => "What rock did it come from?",
    }
}

/// One question, ready to render.
pub struct QuestionView {
    /// Contract property name (also the fieldset id).
    pub property: &'static str,
    /// The question as a sentence (the page heading).
    pub sentence: &'static str,
    /// Legend.
    pub label: &'static str,
    /// How to do the test.
    pub how: &'static str,
    /// The inputs.
    pub inputs: Inputs,
    /// A refusal to show beside the inputs.
    pub error: Option<String>,
    /// What the test is expected to tell, as a sentence, if known: see
    /// [`gain_words`].
    pub gain: Option<String>,
}

fn choices<T: Vocab>(selected: &[String]) -> Vec<Choice> {
    T::ALL
        .iter()
        .map(|v| Choice {
            value: v.as_str().to_string(),
            label: v.label().to_string(),
            checked: selected.iter().any(|s| s == v.as_str()),
        })
        .collect()
}

/// Current values of a property's form fields, from the observations.
fn current_values(o: &Observations, field: &str) -> Vec<String> {
    let v = serde_json::to_value(o).unwrap_or_default();
    let pick = |path: &[&str]| -> Vec<String> {
        let mut cur = &v;
        for p in path {
            match cur.get(p) {
                Some(x) => cur = x,
                None => return Vec::new(),
            }
        }
        match cur {
            serde_json::Value::Array(a) => a
                .iter()
                .filter_map(|x| x.as_str().map(str::to_string))
                .collect(),
            serde_json::Value::String(s) => vec![s.clone()],
            serde_json::Value::Bool(b) => vec![b.to_string()],
            serde_json::Value::Number(n) => vec![n.to_string()],
            _ => Vec::new(),
        }
    };
    match field {
        "hardness_min" => pick(&["hardness", "min"]),
        "hardness_max" => pick(&["hardness", "max"]),
        "scratch_fingernail" => pick(&["scratch", "fingernail"]),
        "scratch_copper" => pick(&["scratch", "copper"]),
        "scratch_steel" => pick(&["scratch", "steel"]),
        "specific_gravity" => match o.specific_gravity {
            Some(SgObs::Value(x)) => vec![num(x)],
            _ => Vec::new(),
        },
        "dry_mass_g" | "submerged_mass_g" | "balance_resolution_g" | "water_temp_c" => {
            pick(&["specific_gravity", field])
        }
        other => pick(&[other]),
    }
}

/// Where a question's values come from: the stored observations, or what
/// was just typed (when the form comes back with a refusal).
pub enum Source<'a> {
    /// The draft's observations.
    Stored(&'a Observations),
    /// The submitted form's raw values.
    Typed(&'a std::collections::BTreeMap<String, Vec<String>>),
}

impl Source<'_> {
    fn values(&self, field: &str) -> Vec<String> {
        match self {
            Source::Stored(o) => current_values(o, field),
            Source::Typed(m) => m.get(field).cloned().unwrap_or_default(),
        }
    }
    fn one(&self, field: &str) -> String {
        self.values(field)
            .into_iter()
            .find(|s| !s.trim().is_empty())
            .unwrap_or_default()
    }
}

fn yes_no_row(
    src: &Source<'_>,
    name: &'static str,
    label: &'static str,
    yes: &'static str,
    no: &'static str,
) -> YesNoRow {
    YesNoRow {
        name,
        label,
        yes,
        no,
        value: src.one(name),
    }
}

/// Builds the view of one question.
pub fn question(
    p: Property,
    src: &Source<'_>,
    errors: &FieldMessages,
    gain: Option<f64>,
) -> QuestionView {
    let sel = |f: &str| src.values(f);
    let inputs = match p {
        Property::Cleavage => Inputs::Choices {
            multiple: false,
            choices: choices::<Cleavage>(&sel("cleavage")),
        },
        Property::Tenacity => Inputs::Choices {
            multiple: false,
            choices: choices::<Tenacity>(&sel("tenacity")),
        },
        Property::Colour => Inputs::Choices {
            multiple: true,
            choices: choices::<Colour>(&sel("colour")),
        },
        Property::Luster => Inputs::Choices {
            multiple: false,
            choices: choices::<Luster>(&sel("luster")),
        },
        Property::Habit => Inputs::Choices {
            multiple: false,
            choices: choices::<Habit>(&sel("habit")),
        },
        Property::Feel => Inputs::Choices {
            multiple: false,
            choices: choices::<Feel>(&sel("feel")),
        },
        Property::WetBehaviour => Inputs::Choices {
            multiple: false,
            choices: choices::<WetBehaviour>(&sel("wet_behaviour")),
        },
        Property::Streak => Inputs::Choices {
            multiple: false,
            choices: choices::<Streak>(&sel("streak")),
        },
        Property::Diaphaneity => Inputs::Choices {
            multiple: false,
            choices: choices::<Diaphaneity>(&sel("diaphaneity")),
        },
        Property::Setting => Inputs::Choices {
            multiple: false,
            choices: choices::<Setting>(&sel("setting")),
        },
        Property::Magnetic => Inputs::YesNo(yes_no_row(
            src,
            "magnetic",
            "Does a hand magnet pull the specimen?",
            "yes, it is pulled",
            "no pull",
        )),
        Property::AcidReaction => Inputs::YesNo(yes_no_row(
            src,
            "acid_reaction",
            "Does it fizz in cold dilute hydrochloric acid?",
            "yes, it fizzes",
            "no fizz",
        )),
        Property::Hardness => Inputs::Hardness {
            min: src.one("hardness_min"),
            max: src.one("hardness_max"),
            rows: vec![
                yes_no_row(
                    src,
                    "scratch_fingernail",
                    "Fingernail (about 2.5)",
                    "scratches it",
                    "does not",
                ),
                yes_no_row(
                    src,
                    "scratch_copper",
                    "Copper coin (about 3.5)",
                    "scratches it",
                    "does not",
                ),
                yes_no_row(
                    src,
                    "scratch_steel",
                    "Steel knife blade (about 5.5)",
                    "scratches it",
                    "does not",
                ),
                yes_no_row(
                    src,
                    "scratches_glass",
                    "Does the specimen scratch window glass (about 5.5)?",
                    "yes",
                    "no",
                ),
            ],
        },
        Property::SpecificGravity => Inputs::Sg {
            value: src.one("specific_gravity"),
            dry: src.one("dry_mass_g"),
            submerged: src.one("submerged_mass_g"),
            resolution: src.one("balance_resolution_g"),
            temp: src.one("water_temp_c"),
        },
    };
    let error = {
        let msgs: Vec<&String> = super::forms::fields_of(p)
            .iter()
            .filter_map(|f| errors.get(*f))
            .collect();
        (!msgs.is_empty()).then(|| {
            msgs.iter()
                .map(|s| s.as_str())
                .collect::<Vec<_>>()
                .join(" ")
        })
    };
    QuestionView {
        property: p.as_str(),
        sentence: question_sentence(p),
        label: p.label(),
        how: p.how(),
        inputs,
        error,
        gain: gain.map(gain_words),
    }
}

/// An expected gain in words. Below [`super::flow::STOP_GAIN_BITS`], or
/// whenever the figure would print as 0.00, a number would only look
/// precise: the page says in words that the answer is unlikely to change.
pub fn gain_words(bits: f64) -> String {
    let figure = format!("{bits:.2}");
    if bits < super::flow::STOP_GAIN_BITS || figure == "0.00" {
        "This test is unlikely to change the answer for this specimen.".to_string()
    } else {
        format!("Expected to tell about {figure} bits for this specimen.")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_small_gain_is_said_in_words_and_never_as_zero_bits() {
        for bits in [0.0, 0.004, 0.005, 0.02, 0.0499] {
            let w = gain_words(bits);
            assert!(w.contains("unlikely to change the answer"), "{bits}: {w}");
            assert!(!w.contains("bits"), "{bits}: {w}");
        }
        assert_eq!(
            gain_words(0.05),
            "Expected to tell about 0.05 bits for this specimen."
        );
        assert_eq!(
            gain_words(0.4213),
            "Expected to tell about 0.42 bits for this specimen."
        );
    }
}
