//! The questioning flow in HTML: start, one question per page, everything
//! at once, results, and the list of unfinished drafts.
//!
//! State lives in SQLite (a draft per identification, its own URL), never
//! only in the browser. Each POST is checked against forgery
//! ([`super::csrf`]), validated by the same parser as the JSON API, and
//! answered with 303 See Other; a refusal re-renders the same form with the
//! user's values and a message beside the field (422).

use askama::Template;
use askama_web::WebTemplate;
use axum::Router;
use axum::body::Bytes;
use axum::extract::{Extension, Path, Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::{get, post};
use serde::Deserialize;

use super::AppState;
use super::csrf::{self, CsrfToken};
use super::error::PageError;
use super::forms::{self, FieldMessages, FormData};
use super::views::{self, AnswerView, CautionView, LeaderView, QuestionView, Source};
use crate::engine::{Identification, Observations, Property};
use crate::store::drafts::{self, Draft};

/// Below this expected gain (bits) no question is worth the geologist's
/// time and the flow goes to the results by itself. A judgement: a test
/// expected to remove 0.05 bits moves the leading probability by a few
/// percentage points at most, less than the spread of the observer-error
/// rates themselves; asking it would cost minutes for no practical change.
pub const STOP_GAIN_BITS: f64 = 0.05;

/// How many leaders the side panel shows.
const LEADERS: usize = 5;

/// Routes of the flow.
pub fn router() -> Router<AppState> {
    Router::new()
        .route("/identify", get(start))
        .route("/identify/drafts", get(list))
        .route("/identify/{id}", get(question).post(answer))
        .route("/identify/{id}/all", get(all_form).post(all_answer))
        .route("/identify/{id}/results", get(results))
        .route("/identify/{id}/discard", post(discard))
}

type PageResult<T> = Result<T, PageError>;

fn valid_id(id: &str) -> bool {
    uuid::Uuid::try_parse(id).is_ok()
}

async fn load(st: &AppState, id: &str) -> PageResult<Draft> {
    let missing = || {
        PageError::NotFound(format!(
            "There is no open identification {id}: it may have been discarded. The list of unfinished ones is at /identify/drafts."
        ))
    };
    if !valid_id(id) {
        return Err(missing());
    }
    drafts::get(&st.db, id).await?.ok_or_else(missing)
}

/// The next question worth asking: highest expected gain among the
/// properties neither answered nor recorded as not tested.
fn next_property(id: &Identification, d: &Draft) -> Option<(Property, f64)> {
    id.next_questions
        .iter()
        .find(|q| !d.skipped.contains(&q.property))
        .filter(|q| q.expected_gain_bits >= STOP_GAIN_BITS)
        .map(|q| (q.property, q.expected_gain_bits))
}

/// A question page.
#[derive(Template, WebTemplate)]
#[template(path = "question.html")]
pub struct QuestionPage {
    /// Page title.
    pub title: String,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token for the form.
    pub csrf: String,
    /// The draft.
    pub draft_id: String,
    /// The question.
    pub q: QuestionView,
    /// Leading candidates.
    pub leaders: Vec<LeaderView>,
    /// The outside-the-base entry.
    pub outside: LeaderView,
    /// Answers so far.
    pub answers: Vec<AnswerView>,
    /// Properties recorded as not tested, by label.
    pub not_tested: Vec<&'static str>,
    /// Cautions for the current candidates.
    pub cautions: Vec<CautionView>,
    /// The saved sample being tested again, if any.
    pub for_sample: Option<String>,
}

fn question_page(
    st: &AppState,
    csrf: &CsrfToken,
    d: &Draft,
    id: &Identification,
    q: QuestionView,
) -> QuestionPage {
    QuestionPage {
        title: format!("{} · identification", q.label),
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        draft_id: d.id.clone(),
        q,
        leaders: views::leaders(id, LEADERS),
        outside: views::outside(id),
        answers: views::answers(&d.observations, &format!("/identify/{}", d.id)),
        not_tested: d.skipped.iter().map(|p| p.label()).collect(),
        cautions: views::cautions(id),
        for_sample: d.for_sample.clone(),
    }
}

/// `GET /identify`: starts an identification (a new draft) and shows its
/// first question. The form posts to the draft's own URL.
async fn start(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
) -> PageResult<QuestionPage> {
    let d = drafts::create(&st.db).await?;
    let id = st.engine.identify(&d.observations);
    let (p, gain) = next_property(&id, &d).unwrap_or((Property::Setting, 0.0));
    let q = views::question(
        p,
        &Source::Stored(&d.observations),
        &FieldMessages::new(),
        Some(gain),
    );
    Ok(question_page(&st, &csrf, &d, &id, q))
}

/// `?q=property`: the question to show (a "change it" link).
#[derive(Deserialize)]
struct Ask {
    q: Option<String>,
}

/// `GET /identify/{id}`: the next question, or the one asked for.
async fn question(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(draft): Path<String>,
    Query(ask): Query<Ask>,
) -> PageResult<Response> {
    let d = load(&st, &draft).await?;
    let id = st.engine.identify(&d.observations);
    let chosen = match ask.q.as_deref() {
        Some(name) => Some(
            Property::parse(name)
                .map(|p| {
                    (
                        p,
                        id.next_questions
                            .iter()
                            .find(|q| q.property == p)
                            .map(|q| q.expected_gain_bits),
                    )
                })
                .ok_or_else(|| {
                    PageError::NotFound(format!("There is no question called \"{name}\"."))
                })?,
        ),
        None => next_property(&id, &d).map(|(p, g)| (p, Some(g))),
    };
    let Some((p, gain)) = chosen else {
        return Ok(Redirect::to(&format!("/identify/{}/results", d.id)).into_response());
    };
    let q = views::question(
        p,
        &Source::Stored(&d.observations),
        &FieldMessages::new(),
        gain,
    );
    Ok(question_page(&st, &csrf, &d, &id, q).into_response())
}

/// `POST /identify/{id}`: records one answer (or "not tested") and moves on.
async fn answer(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(draft): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let d = load(&st, &draft).await?;
    let p = form
        .get("question")
        .and_then(Property::parse)
        .ok_or_else(|| {
            PageError::NotFound("The form did not say which question it answers.".to_string())
        })?;
    let to_results = form.get("then") == Some("results");
    match forms::apply(&d.observations, &[p], &form) {
        Ok(applied) => {
            let mut skipped: Vec<Property> =
                d.skipped.iter().copied().filter(|s| *s != p).collect();
            skipped.extend(applied.not_tested.iter().copied());
            drafts::save(&st.db, &d.id, &applied.observations, &skipped).await?;
            let next = if to_results {
                format!("/identify/{}/results", d.id)
            } else {
                format!("/identify/{}", d.id)
            };
            Ok(Redirect::to(&next).into_response())
        }
        Err(errors) => {
            let id = st.engine.identify(&d.observations);
            let raw = form.raw();
            let gain = id
                .next_questions
                .iter()
                .find(|q| q.property == p)
                .map(|q| q.expected_gain_bits);
            let q = views::question(p, &Source::Typed(&raw), &errors, gain);
            Ok((
                StatusCode::UNPROCESSABLE_ENTITY,
                question_page(&st, &csrf, &d, &id, q),
            )
                .into_response())
        }
    }
}

/// The everything-at-once form.
#[derive(Template, WebTemplate)]
#[template(path = "all.html")]
pub struct AllPage {
    /// Page title.
    pub title: &'static str,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token.
    pub csrf: String,
    /// The draft.
    pub draft_id: String,
    /// Every question.
    pub questions: Vec<QuestionView>,
    /// Whether any refusal is shown.
    pub has_errors: bool,
}

fn all_page(
    st: &AppState,
    csrf: &CsrfToken,
    d: &Draft,
    src: &Source<'_>,
    errors: &FieldMessages,
) -> AllPage {
    AllPage {
        title: "Enter every observation",
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        draft_id: d.id.clone(),
        questions: Property::ALL
            .iter()
            .map(|&p| views::question(p, src, errors, None))
            .collect(),
        has_errors: !errors.is_empty(),
    }
}

/// `GET /identify/{id}/all`.
async fn all_form(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(draft): Path<String>,
) -> PageResult<AllPage> {
    let d = load(&st, &draft).await?;
    Ok(all_page(
        &st,
        &csrf,
        &d,
        &Source::Stored(&d.observations),
        &FieldMessages::new(),
    ))
}

/// `POST /identify/{id}/all`: replaces every observation, then results.
async fn all_answer(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(draft): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let d = load(&st, &draft).await?;
    match forms::apply(&d.observations, &Property::ALL, &form) {
        Ok(applied) => {
            drafts::save(&st.db, &d.id, &applied.observations, &applied.not_tested).await?;
            Ok(Redirect::to(&format!("/identify/{}/results", d.id)).into_response())
        }
        Err(errors) => {
            let raw = form.raw();
            let page = all_page(&st, &csrf, &d, &Source::Typed(&raw), &errors);
            Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response())
        }
    }
}

/// A candidate on the results page.
pub struct CandidateView {
    /// Bars and markers.
    pub bar: LeaderView,
    /// Group label, unless it only repeats the name.
    pub group: Option<&'static str>,
    /// Not a sheet silicate.
    pub lookalike: bool,
    /// Observations that raised it, in words.
    pub raised: Vec<String>,
    /// Observations that lowered it, in words.
    pub lowered: Vec<String>,
}

/// The separating test, for people.
pub struct SeparatingView {
    /// First candidate's name.
    pub first: String,
    /// Second candidate's name.
    pub second: String,
    /// Property label.
    pub label: &'static str,
    /// Contract property name, for the link.
    pub property: &'static str,
    /// How to do it.
    pub how: String,
    /// "brittle → favours chloritoid about 30 to 1".
    pub outcomes: Vec<String>,
}

/// The results page.
#[derive(Template, WebTemplate)]
#[template(path = "results.html")]
pub struct ResultsPage {
    /// Page title.
    pub title: &'static str,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token (the discard form).
    pub csrf: String,
    /// The draft.
    pub draft_id: String,
    /// Candidates above one percent, in rank order.
    pub top: Vec<CandidateView>,
    /// The rest, in rank order.
    pub rest: Vec<CandidateView>,
    /// The outside-the-base entry.
    pub outside: LeaderView,
    /// Whether outside the base is large enough to say so plainly.
    pub outside_large: bool,
    /// Groups with at least one percent.
    pub groups: Vec<(String, String)>,
    /// The best test between the two leaders.
    pub separating: Option<SeparatingView>,
    /// Cautions.
    pub cautions: Vec<CautionView>,
    /// What a laboratory method would settle.
    pub laboratory: Option<String>,
    /// Disagreements between observations.
    pub observation_conflicts: Vec<String>,
    /// Answers so far.
    pub answers: Vec<AnswerView>,
    /// Whether anything was observed at all.
    pub observed_anything: bool,
    /// A question still worth asking, if any.
    pub more_to_ask: Option<&'static str>,
    /// The saved sample being tested again (id, code), while it is live.
    pub for_sample: Option<(String, String)>,
}

fn words(o: &Observations, props: &[Property]) -> Vec<String> {
    props
        .iter()
        .filter_map(|&p| views::observed_text(o, p).map(|t| format!("{}: {t}", p.label())))
        .collect()
}

fn answer_label(p: Property, answer: &str) -> String {
    use crate::base::vocab::*;
    fn label<T: Vocab>(s: &str) -> String {
        T::parse(s).map_or_else(|| s.to_string(), |v| v.label().to_string())
    }
    match p {
        Property::Cleavage => label::<Cleavage>(answer),
        Property::Tenacity => label::<Tenacity>(answer),
        Property::Colour => label::<Colour>(answer),
        Property::Luster => label::<Luster>(answer),
        Property::Habit => label::<Habit>(answer),
        Property::Feel => label::<Feel>(answer),
        Property::WetBehaviour => label::<WetBehaviour>(answer),
        Property::Streak => label::<Streak>(answer),
        Property::Diaphaneity => label::<Diaphaneity>(answer),
        Property::Setting => label::<Setting>(answer),
        Property::Magnetic => if answer == "true" {
            "pulled by a magnet"
        } else {
            "no pull"
        }
        .to_string(),
        Property::AcidReaction => if answer == "true" {
            "fizzes"
        } else {
            "no fizz"
        }
        .to_string(),
        Property::Hardness | Property::SpecificGravity => answer.to_string(),
    }
}

/// `GET /identify/{id}/results`.
async fn results(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(draft): Path<String>,
) -> PageResult<ResultsPage> {
    let d = load(&st, &draft).await?;
    let o = &d.observations;
    let id = st.engine.identify(o);
    let more = next_property(&id, &d);
    if more.is_none() {
        drafts::finish(&st.db, &d.id).await?;
    }
    let for_sample = match d.for_sample.as_deref() {
        Some(sid) => crate::store::samples::get(&st.db, sid)
            .await?
            .filter(|s| !s.deleted)
            .map(|s| (s.id, s.sample_code)),
        None => None,
    };
    let base = st.engine.base();
    let name_of = |eid: &str| {
        base.entry(eid)
            .map_or_else(|| eid.to_string(), |e| e.name.clone())
    };
    let bars = views::leaders(&id, id.candidates.len());
    let mut views_all: Vec<CandidateView> = id
        .candidates
        .iter()
        .zip(bars)
        .map(|(c, bar)| CandidateView {
            bar,
            group: {
                use crate::base::vocab::{Group, Vocab};
                let g = c.group.label();
                (!g.eq_ignore_ascii_case(&c.name) && c.group != Group::NotSheetSilicate)
                    .then_some(g)
            },
            lookalike: !c.sheet_silicate,
            raised: words(o, &c.agrees),
            lowered: words(o, &c.conflicts),
        })
        .collect();
    let split = id
        .candidates
        .iter()
        .take_while(|c| c.probability >= 0.01)
        .count()
        .max(1)
        .min(views_all.len());
    let rest = views_all.split_off(split);
    let separating = id.separating_test.as_ref().map(|s| SeparatingView {
        first: name_of(&s.first),
        second: name_of(&s.second),
        label: s.property.label(),
        property: s.property.as_str(),
        how: s.how.clone(),
        outcomes: s
            .outcomes
            .iter()
            .map(|oc| {
                format!(
                    "{} → favours {} about {:.0} to 1",
                    answer_label(s.property, &oc.answer),
                    name_of(&oc.favours),
                    oc.ratio
                )
            })
            .collect(),
    });
    Ok(ResultsPage {
        title: "Results",
        base_version: base.version.clone(),
        csrf: csrf.0.clone(),
        draft_id: d.id.clone(),
        top: views_all,
        rest,
        outside: views::outside(&id),
        outside_large: id.outside_base >= 0.2,
        groups: id
            .groups
            .iter()
            .filter(|g| g.probability >= 0.01)
            .map(|g| {
                use crate::base::vocab::Vocab;
                (g.id.label().to_string(), views::percent(g.probability))
            })
            .collect(),
        separating,
        cautions: views::cautions(&id),
        laboratory: id.laboratory.clone(),
        observation_conflicts: id.observation_conflicts.clone(),
        answers: views::answers(o, &format!("/identify/{}", d.id)),
        observed_anything: !o.is_empty(),
        more_to_ask: more.map(|(p, _)| p.label()),
        for_sample,
    })
}

/// `POST /identify/{id}/discard`.
async fn discard(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(draft): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    if !valid_id(&draft) || !drafts::discard(&st.db, &draft).await? {
        return Err(PageError::NotFound(format!(
            "There is no open identification {draft} to discard."
        )));
    }
    Ok(Redirect::to("/identify/drafts").into_response())
}

/// A line of the drafts page.
pub struct DraftLine {
    /// Draft id.
    pub id: String,
    /// Last change.
    pub updated_at: String,
    /// How many observations.
    pub answers: usize,
    /// The leading candidate and its probability.
    pub leader: String,
    /// Whether the flow has reached its results.
    pub finished: bool,
}

/// The drafts page.
#[derive(Template, WebTemplate)]
#[template(path = "drafts.html")]
pub struct DraftsPage {
    /// Page title.
    pub title: &'static str,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token.
    pub csrf: String,
    /// Open drafts, most recent first.
    pub drafts: Vec<DraftLine>,
}

/// `GET /identify/drafts`.
async fn list(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
) -> PageResult<DraftsPage> {
    let ds = drafts::list_open(&st.db, 200).await?;
    let lines = ds
        .iter()
        .map(|d| {
            let id = st.engine.identify(&d.observations);
            let leader = id
                .candidates
                .first()
                .filter(|_| !d.observations.is_empty())
                .map_or_else(
                    || "nothing observed yet".to_string(),
                    |c| format!("{} {}", c.name, views::percent(c.probability)),
                );
            DraftLine {
                id: d.id.clone(),
                updated_at: d.updated_at.replace('T', " ").chars().take(16).collect(),
                answers: Property::ALL
                    .iter()
                    .filter(|p| p.is_observed(&d.observations))
                    .count(),
                leader,
                finished: d.finished_at.is_some(),
            }
        })
        .collect();
    Ok(DraftsPage {
        title: "Unfinished identifications",
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        drafts: lines,
    })
}
