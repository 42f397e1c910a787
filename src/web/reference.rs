//! Reference pages: `/minerals` and `/minerals/{id}`.
//!
//! The property base as people at the bench read it: every entry by group
//! with its formula and ranges, and one page per entry with every property
//! the engine scores, the ideal composition, hazards, the source of each
//! value and the nearest lookalikes with the tests that separate them.
//! Handlers parse the id, ask the base and [`crate::engine::lookalikes`],
//! and render; the `*View` builders below only turn domain values into
//! text.

use askama::Template;
use askama_web::WebTemplate;
use axum::Router;
use axum::extract::rejection::PathRejection;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use axum::routing::get;

use super::AppState;
use crate::base::vocab::{Group, Hazard, Vocab};
use crate::base::{Base, Entry, IdealComposition, SOURCED_PROPERTIES, SourceKind};
use crate::engine::cautions;
use crate::engine::lookalikes::{self, Lookalike};
use crate::engine::{Engine, Property};

/// Routes of the reference pages.
pub fn router() -> Router<AppState> {
    Router::new()
        .route("/minerals", get(list))
        .route("/minerals/{id}", get(one))
}

/// Plain words for how much weight a source carries.
pub fn kind_label(kind: SourceKind) -> &'static str {
    match kind {
        SourceKind::Handbook => "handbook",
        SourceKind::CommonPractice => "common practice",
        SourceKind::FromMemory => "from memory",
    }
}

/// A CSS class per source kind, so the three read apart at a glance.
fn kind_class(kind: SourceKind) -> &'static str {
    match kind {
        SourceKind::Handbook => "src-handbook",
        SourceKind::CommonPractice => "src-practice",
        SourceKind::FromMemory => "src-memory",
    }
}

/// The label of a sourced property name (the 14 scored properties plus
/// `formula` and `prior`).
fn sourced_label(name: &str) -> &'static str {
    match name {
        "formula" => "Formula",
        "prior" => "Base rate (prior)",
        other => Property::parse(other).map_or("Other", Property::label),
    }
}

/// Writes the digits of a chemical formula as subscripts (`Al2O3` → `Al₂O₃`).
fn subscript_digits(s: &str) -> String {
    s.chars()
        .map(|c| match c.to_digit(10) {
            Some(d) => char::from_u32(0x2080 + d).unwrap_or(c),
            None => c,
        })
        .collect()
}

/// Hardness and SG of an entry, as the pages write them.
fn ranges(e: &Entry) -> (String, String) {
    (
        lookalikes::typical(e, Property::Hardness).to_string(),
        lookalikes::typical(e, Property::SpecificGravity).to_string(),
    )
}

// ---------------------------------------------------------------------------
// GET /minerals
// ---------------------------------------------------------------------------

/// One entry as the list shows it.
pub struct ListRow {
    /// Entry id (the page's path segment).
    pub id: String,
    /// Name.
    pub name: String,
    /// Display formula.
    pub formula: String,
    /// Mohs hardness range.
    pub hardness: String,
    /// Specific-gravity range.
    pub specific_gravity: String,
    /// Hazards (empty when none): the label and the contract code (the
    /// CSS class `hazard-{code}`).
    pub hazards: Vec<(&'static str, &'static str)>,
    /// Whether the name stands for a series or group.
    pub is_series: bool,
}

/// The entries of one group.
pub struct GroupSection {
    /// Group id (an anchor on the page).
    pub id: &'static str,
    /// Group label.
    pub label: &'static str,
    /// Its entries, in base order.
    pub rows: Vec<ListRow>,
}

/// `GET /minerals`: every entry, grouped.
#[derive(Template, WebTemplate)]
#[template(path = "minerals.html")]
pub struct MineralsPage {
    /// Page title.
    pub title: &'static str,
    /// Base version shown in the footer.
    pub base_version: String,
    /// Number of entries.
    pub count: usize,
    /// The groups that hold entries, in vocabulary order.
    pub groups: Vec<GroupSection>,
}

impl MineralsPage {
    fn new(base: &Base) -> MineralsPage {
        let groups = Group::ALL
            .iter()
            .map(|&g| GroupSection {
                id: g.as_str(),
                label: g.label(),
                rows: base
                    .entries
                    .iter()
                    .filter(|e| e.group == g)
                    .map(|e| {
                        let (hardness, specific_gravity) = ranges(e);
                        ListRow {
                            id: e.id.clone(),
                            name: e.name.clone(),
                            formula: e.formula.clone(),
                            hardness,
                            specific_gravity,
                            hazards: e.hazards.iter().map(|&h| hazard_tag(h)).collect(),
                            is_series: !e.series.trim().is_empty(),
                        }
                    })
                    .collect(),
            })
            .filter(|s| !s.rows.is_empty())
            .collect();
        MineralsPage {
            title: "Minerals in the base",
            base_version: base.version.clone(),
            count: base.entries.len(),
            groups,
        }
    }
}

async fn list(State(st): State<AppState>) -> MineralsPage {
    MineralsPage::new(st.engine.base())
}

// ---------------------------------------------------------------------------
// GET /minerals/{id}
// ---------------------------------------------------------------------------

/// A hazard shown as a caution box.
pub struct CautionView {
    /// Heading of the box.
    pub heading: &'static str,
    /// What to do, in plain words (the engine's caution text).
    pub text: &'static str,
    /// The contract code (the CSS class `hazard-{code}`).
    pub code: &'static str,
}

/// One scored property of the entry.
pub struct PropertyRow {
    /// Property label.
    pub label: &'static str,
    /// Typical values (or the range), labelled for people.
    pub typical: String,
    /// Occasional values, labelled; empty when none.
    pub occasional: String,
    /// Source kind label.
    pub source_kind: &'static str,
    /// CSS class of the kind.
    pub source_class: &'static str,
    /// Source key (anchor into the source list).
    pub source_key: String,
}

/// One source the entry cites, with what it is cited for.
pub struct SourceView {
    /// Source key (an anchor on the page).
    pub key: String,
    /// Kind label.
    pub kind: &'static str,
    /// CSS class of the kind.
    pub class: &'static str,
    /// Full citation.
    pub citation: String,
    /// Labels of the properties that cite it.
    pub properties: Vec<&'static str>,
}

/// The ideal composition, as text.
pub struct CompositionView {
    /// The formula computed from.
    pub formula: String,
    /// Molar mass, g/mol.
    pub molar_mass: String,
    /// (oxide, wt %).
    pub oxides: Vec<(String, String)>,
    /// Oxygen equivalent of F and Cl, when there is one.
    pub halogen_correction: Option<String>,
    /// Oxide total after the correction.
    pub oxide_total: String,
    /// Bound water, wt %.
    pub bound_water: String,
    /// (element, wt %).
    pub elements: Vec<(String, String)>,
}

impl CompositionView {
    fn new(c: &IdealComposition) -> CompositionView {
        let total = c.oxides.iter().map(|(_, w)| w).sum::<f64>() - c.halogen_correction;
        CompositionView {
            formula: c.formula.clone(),
            molar_mass: format!("{:.2}", c.molar_mass_g_mol),
            oxides: c
                .oxides
                .iter()
                .map(|(o, w)| (subscript_digits(o), format!("{w:.2}")))
                .collect(),
            halogen_correction: (c.halogen_correction > 0.0)
                .then(|| format!("{:.2}", c.halogen_correction)),
            oxide_total: format!("{total:.2}"),
            bound_water: format!("{:.2}", c.bound_water_wt_percent),
            elements: c
                .elements
                .iter()
                .map(|(e, w)| (e.clone(), format!("{w:.2}")))
                .collect(),
        }
    }
}

/// One separating test, as text.
pub struct SeparatorView {
    /// Property label.
    pub label: &'static str,
    /// What this entry typically shows.
    pub this: String,
    /// What the lookalike typically shows.
    pub other: String,
}

/// One lookalike, as text.
pub struct LookalikeView {
    /// Its id (link target).
    pub id: String,
    /// Its name.
    pub name: String,
    /// Mean overlap, two decimals.
    pub similarity: String,
    /// No hand test separates the pair well.
    pub hard_to_separate: bool,
    /// The laboratory line to fall back on when hard to separate.
    pub lab: String,
    /// The separating tests, best first.
    pub tests: Vec<SeparatorView>,
}

impl LookalikeView {
    fn new(base: &Base, this: &Entry, l: &Lookalike) -> LookalikeView {
        // The laboratory line that names the other mineral, else this
        // entry's own, else the lookalike's.
        let mine = this.lab.trim();
        let theirs = base.entry(&l.id).map_or("", |o| o.lab.trim());
        let names = |text: &str, name: &str| text.to_lowercase().contains(&name.to_lowercase());
        let lab = if names(mine, &l.name) {
            mine
        } else if names(theirs, &this.name) {
            theirs
        } else if !mine.is_empty() {
            mine
        } else {
            theirs
        }
        .to_string();
        LookalikeView {
            id: l.id.clone(),
            name: l.name.clone(),
            similarity: format!("{:.2}", l.similarity),
            hard_to_separate: l.hard_to_separate(),
            lab,
            tests: l
                .separators
                .iter()
                .map(|s| SeparatorView {
                    label: s.property.label(),
                    this: s.this.labels(),
                    other: s.other.labels(),
                })
                .collect(),
        }
    }
}

/// How to make one test.
pub struct HowView {
    /// Property label.
    pub label: &'static str,
    /// The field method.
    pub how: &'static str,
}

/// `GET /minerals/{id}`: one entry in full.
#[derive(Template, WebTemplate)]
#[template(path = "mineral.html")]
pub struct MineralPage {
    /// Page title (the mineral's name).
    pub title: String,
    /// Base version shown in the footer.
    pub base_version: String,
    /// Entry id.
    pub id: String,
    /// Name.
    pub name: String,
    /// Group label.
    pub group: &'static str,
    /// Group id (anchor on the list page).
    pub group_id: &'static str,
    /// False for the lookalikes that are not sheet silicates.
    pub sheet_silicate: bool,
    /// Other names logged under this entry.
    pub aliases: Vec<String>,
    /// Display formula.
    pub formula: String,
    /// Parsable end-member formula.
    pub ideal_formula: String,
    /// Series or group text; empty for a single mineral.
    pub series: String,
    /// How to tell it from its lookalikes.
    pub notes: String,
    /// What a laboratory method settles.
    pub lab: String,
    /// Hazard boxes.
    pub cautions: Vec<CautionView>,
    /// Every property the engine scores.
    pub properties: Vec<PropertyRow>,
    /// Ideal composition (absent only if the formula would not parse,
    /// which the base's validation rules out).
    pub composition: Option<CompositionView>,
    /// The sources cited, each with the properties citing it.
    pub sources: Vec<SourceView>,
    /// Nearest lookalikes.
    pub lookalikes: Vec<LookalikeView>,
    /// How to make each test.
    pub hows: Vec<HowView>,
}

/// A hazard's tag in the mineral list: the same name as its caution box.
fn hazard_tag(h: Hazard) -> (&'static str, &'static str) {
    match h {
        Hazard::Asbestos => (crate::web::views::ASBESTOS_HEADING, "asbestos"),
        Hazard::Dust => (crate::web::views::DUST_HEADING, "dust"),
    }
}

fn caution_for(h: Hazard) -> CautionView {
    match h {
        Hazard::Asbestos => CautionView {
            heading: crate::web::views::ASBESTOS_HEADING,
            text: cautions::ASBESTOS,
            code: "asbestos",
        },
        Hazard::Dust => CautionView {
            heading: crate::web::views::DUST_HEADING,
            text: cautions::DUST,
            code: "dust",
        },
    }
}

impl MineralPage {
    fn new(engine: &Engine, e: &Entry, near: &[Lookalike]) -> MineralPage {
        let base = engine.base();
        let properties = Property::ALL
            .iter()
            .map(|&p| {
                let source = base.source_for(e, p.as_str());
                let occasional = lookalikes::occasional(e, p);
                PropertyRow {
                    label: p.label(),
                    typical: lookalikes::typical(e, p).labels(),
                    occasional: if occasional.is_empty() {
                        String::new()
                    } else {
                        occasional.labels()
                    },
                    source_kind: source.map_or("not given", |s| kind_label(s.kind)),
                    source_class: source.map_or("", |s| kind_class(s.kind)),
                    source_key: e.sources.get(p.as_str()).cloned().unwrap_or_default(),
                }
            })
            .collect();
        // Each cited source once, in the order its first property is listed.
        let mut sources: Vec<SourceView> = Vec::new();
        for prop in SOURCED_PROPERTIES {
            let (Some(key), Some(src)) = (e.sources.get(*prop), base.source_for(e, prop)) else {
                continue;
            };
            match sources.iter_mut().find(|s| &s.key == key) {
                Some(s) => s.properties.push(sourced_label(prop)),
                None => sources.push(SourceView {
                    key: key.clone(),
                    kind: kind_label(src.kind),
                    class: kind_class(src.kind),
                    citation: src.citation.clone(),
                    properties: vec![sourced_label(prop)],
                }),
            }
        }
        MineralPage {
            title: e.name.clone(),
            base_version: base.version.clone(),
            id: e.id.clone(),
            name: e.name.clone(),
            group: e.group.label(),
            group_id: e.group.as_str(),
            sheet_silicate: e.sheet_silicate,
            aliases: e.aliases.clone(),
            formula: e.formula.clone(),
            ideal_formula: e.ideal_formula.clone(),
            series: e.series.trim().to_string(),
            notes: e.notes.trim().to_string(),
            lab: e.lab.trim().to_string(),
            cautions: e.hazards.iter().map(|&h| caution_for(h)).collect(),
            properties,
            composition: e.ideal_composition().as_ref().map(CompositionView::new),
            sources,
            lookalikes: near
                .iter()
                .map(|l| LookalikeView::new(base, e, l))
                .collect(),
            hows: Property::ALL
                .iter()
                .filter(|p| **p != Property::Setting)
                .map(|&p| HowView {
                    label: p.label(),
                    how: p.how(),
                })
                .collect(),
        }
    }
}

/// The page for an id the base does not hold.
#[derive(Template, WebTemplate)]
#[template(
    ext = "html",
    source = r#"{% extends "_layout.html" %}
{% block head %}<link rel="stylesheet" href="/static/reference.css">{% endblock %}
{% block content %}
<h1>{{ title }}</h1>
<p class="error-message">{{ message }}</p>
<p><a href="/minerals">See every mineral in the base</a></p>
{% endblock %}"#
)]
pub struct MineralNotFound {
    /// Page title.
    pub title: &'static str,
    /// Base version shown in the footer.
    pub base_version: String,
    /// What was not found, in plain words.
    pub message: String,
}

/// The 404 page for an id the base does not hold; `asked` is echoed back
/// (escaped, and cut short) when the path could be read.
fn not_found(base: &Base, asked: Option<&str>) -> Response {
    let message = match asked {
        Some(id) => {
            let shown: String = id.chars().take(60).collect();
            let cut = if shown.len() < id.len() { "…" } else { "" };
            format!("The base holds no mineral with the id \u{201c}{shown}{cut}\u{201d}.")
        }
        None => "The base holds no mineral at that address.".to_string(),
    };
    let page = MineralNotFound {
        title: "No such mineral",
        base_version: base.version.clone(),
        message: format!(
            "{message} Ids are lower-case mineral names with underscores, such as muscovite or chlorite."
        ),
    };
    (StatusCode::NOT_FOUND, page).into_response()
}

async fn one(State(st): State<AppState>, id: Result<Path<String>, PathRejection>) -> Response {
    let base = st.engine.base();
    let Ok(Path(id)) = id else {
        return not_found(base, None);
    };
    match (base.entry(&id), lookalikes::lookalikes(st.engine, &id)) {
        (Some(e), Some(near)) => MineralPage::new(st.engine, e, &near).into_response(),
        _ => not_found(base, Some(&id)),
    }
}
