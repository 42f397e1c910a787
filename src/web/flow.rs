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
use axum::extract::{DefaultBodyLimit, Extension, Path, Query, State};
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

/// Below this expected gain (bits) the flow advises that the answer is
/// unlikely to change: the question page says so and offers the results,
/// and the results page stops suggesting "keep going". It is advice only:
/// every remaining question can still be answered from either page (a
/// geologist who has a streak or a hardness wants it recorded, and it may
/// still catch a wrong observation). A judgement: a test expected to
/// remove 0.05 bits moves the leading probability by a few percentage
/// points at most, less than the spread of the observer-error rates
/// themselves.
pub const STOP_GAIN_BITS: f64 = 0.05;

/// How many leaders the side panel shows.
const LEADERS: usize = 5;

/// Largest form body the flow accepts. The everything-at-once form with
/// every box ticked is under 2 KiB; the limit of the JSON API is ample.
pub const FORM_LIMIT: usize = super::api::BODY_LIMIT;

/// Routes of the flow. Every POST is a form checked against forgery
/// ([`csrf::verify`]) and limited to [`FORM_LIMIT`].
pub fn router() -> Router<AppState> {
    Router::new()
        .route("/identify", get(start).post(begin))
        .route("/identify/drafts", get(list))
        .route("/identify/{id}", get(question).post(answer))
        .route("/identify/{id}/all", get(all_form).post(all_answer))
        .route("/identify/{id}/results", get(results))
        .route("/identify/{id}/discard", post(discard))
        .layer(DefaultBodyLimit::max(FORM_LIMIT))
}

type PageResult<T> = Result<T, PageError>;

fn valid_id(id: &str) -> bool {
    uuid::Uuid::try_parse(id).is_ok()
}

async fn load(st: &AppState, id: &str) -> PageResult<Draft> {
    let missing = || {
        PageError::NotFound(format!(
            "There is no unfinished identification {id}: it may have been discarded. Unfinished identifications are listed at /identify/drafts."
        ))
    };
    if !valid_id(id) {
        return Err(missing());
    }
    drafts::get(&st.db, id).await?.ok_or_else(missing)
}

/// The next question to ask: highest expected gain among the properties
/// neither answered nor recorded as not tested, however small the gain
/// (see [`STOP_GAIN_BITS`] for the advice shown when it is small).
fn next_property(id: &Identification, skipped: &[Property]) -> Option<(Property, f64)> {
    id.next_questions
        .iter()
        .find(|q| !skipped.contains(&q.property))
        .map(|q| (q.property, q.expected_gain_bits))
}

/// Whether a question is expected to tell enough to suggest it.
fn worth_asking(gain: f64) -> bool {
    gain >= STOP_GAIN_BITS
}

/// An unanswered question, as a link that asks it.
pub struct RemainingView {
    /// Its label.
    pub label: &'static str,
    /// `/identify/{id}?ask=property`.
    pub href: String,
    /// Recorded as "not tested" earlier.
    pub not_tested: bool,
}

/// Every property not observed yet, most informative first, each with the
/// link that asks it.
fn remaining(id: &Identification, d: &Draft) -> Vec<RemainingView> {
    id.next_questions
        .iter()
        .map(|q| RemainingView {
            label: q.property.label(),
            href: format!("/identify/{}?ask={}", d.id, q.property.as_str()),
            not_tested: d.skipped.contains(&q.property),
        })
        .collect()
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
    /// Where the form posts: the draft's URL, or `/identify` on the start
    /// page (the first answer creates the draft).
    pub action: String,
    /// The draft, once there is one.
    pub draft_id: Option<String>,
    /// The question.
    pub q: QuestionView,
    /// Whether even the best remaining question is unlikely to change the
    /// answer (below [`STOP_GAIN_BITS`]).
    pub settled: bool,
    /// The questions still open, as links (shown when `settled`).
    pub remaining: Vec<RemainingView>,
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
    let best = next_property(id, &d.skipped).map_or(0.0, |(_, g)| g);
    QuestionPage {
        title: format!("{} · identification", q.label),
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        action: format!("/identify/{}", d.id),
        draft_id: Some(d.id.clone()),
        q,
        settled: !worth_asking(best),
        remaining: remaining(id, d),
        leaders: views::leaders(id, LEADERS),
        outside: views::outside(id),
        answers: views::answers(&d.observations, &format!("/identify/{}", d.id)),
        not_tested: d.skipped.iter().map(|p| p.label()).collect(),
        cautions: views::cautions(id),
        for_sample: d.for_sample.clone(),
    }
}

/// The start page: the first question of an identification that has no
/// draft yet. Its form posts to `/identify`, which creates the draft.
fn start_page(
    st: &AppState,
    csrf: &CsrfToken,
    src: &Source<'_>,
    errors: &FieldMessages,
    asked: Option<Property>,
) -> QuestionPage {
    let empty = Observations::default();
    let id = st.engine.identify(&empty);
    let best = next_property(&id, &[]);
    let (p, gain) = match asked {
        Some(p) => (
            p,
            id.next_questions
                .iter()
                .find(|q| q.property == p)
                .map_or(0.0, |q| q.expected_gain_bits),
        ),
        None => best.unwrap_or((Property::Setting, 0.0)),
    };
    let q = views::question(p, src, errors, Some(gain));
    QuestionPage {
        title: format!("{} · identification", q.label),
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        action: "/identify".to_string(),
        draft_id: None,
        q,
        settled: false,
        remaining: Vec::new(),
        leaders: views::leaders(&id, LEADERS),
        outside: views::outside(&id),
        answers: Vec::new(),
        not_tested: Vec::new(),
        cautions: views::cautions(&id),
        for_sample: None,
    }
}

/// `GET /identify` (and `HEAD`): starts an identification by showing its
/// first question. Nothing is stored: a page view changes no state, so
/// reloads, prefetches and other sites' links cannot fill the drafts table.
/// The draft is created when the form is submitted ([`begin`]).
async fn start(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
) -> PageResult<QuestionPage> {
    Ok(start_page(
        &st,
        &csrf,
        &Source::Stored(&Observations::default()),
        &FieldMessages::new(),
        None,
    ))
}

/// `POST /identify`: the start page's form (checked against forgery like
/// every form). Creates the draft with the first answer, or with "not
/// tested" when it was left blank, and goes on: `then=results` to the
/// results, `then=all` to the everything-at-once form, else to the next
/// question. A form with no `question` only creates the draft.
async fn begin(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let asked = match form.get("question") {
        None | Some("") => None,
        Some(name) => Some(Property::parse(name).ok_or_else(|| {
            PageError::NotFound(format!("There is no question called \"{name}\"."))
        })?),
    };
    let props: Vec<Property> = asked.into_iter().collect();
    match forms::apply(&Observations::default(), &props, &form) {
        Ok(applied) => {
            let d = drafts::create(&st.db, &applied.observations, &applied.not_tested).await?;
            let next = match form.get("then") {
                Some("results") => format!("/identify/{}/results", d.id),
                Some("all") => format!("/identify/{}/all", d.id),
                _ => format!("/identify/{}", d.id),
            };
            Ok(Redirect::to(&next).into_response())
        }
        Err(errors) => {
            let raw = form.raw();
            let page = start_page(&st, &csrf, &Source::Typed(&raw), &errors, asked);
            Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response())
        }
    }
}

/// `?ask=property` (or `?q=`, the older name the "change" links use): the
/// question to show, picked by hand.
#[derive(Deserialize)]
struct Ask {
    ask: Option<String>,
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
    let chosen = match ask.ask.as_deref().or(ask.q.as_deref()) {
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
        None => next_property(&id, &d.skipped).map(|(p, g)| (p, Some(g))),
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
        title: "Every observation on one form",
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
    /// What the first typically shows.
    pub first_typical: String,
    /// What the second typically shows.
    pub second_typical: String,
    /// "green → typical of Chlorite, not of Muscovite".
    pub outcomes: Vec<String>,
    /// Where each is typically found (context, not a test).
    pub settings: (String, String),
}

/// Two plausible leaders that no hand test separates.
pub struct NoHandView {
    /// First candidate's name.
    pub first: String,
    /// Second candidate's name.
    pub second: String,
    /// The base's laboratory note.
    pub laboratory: Option<String>,
    /// Where each is typically found (context, not a test).
    pub settings: (String, String),
}

/// The results page.
#[derive(Template, WebTemplate)]
#[template(path = "results.html")]
pub struct ResultsPage {
    /// Page title: the leader with its probability and the draft.
    pub title: String,
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
    /// Said plainly when no hand test separates the two leaders.
    pub no_hand_test: Option<NoHandView>,
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
    /// Every property not observed yet, with the link that asks it.
    pub unanswered: Vec<RemainingView>,
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
    let more = next_property(&id, &d.skipped).filter(|(_, g)| worth_asking(*g));
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
    let setting_of = |eid: &str| {
        base.entry(eid).map_or_else(String::new, |e| {
            crate::engine::lookalikes::typical(e, Property::Setting).labels()
        })
    };
    let separating = id.separating_test.as_ref().map(|s| SeparatingView {
        first: name_of(&s.first),
        second: name_of(&s.second),
        label: s.property.label(),
        property: s.property.as_str(),
        how: s.how.clone(),
        first_typical: s.first_typical.clone(),
        second_typical: s.second_typical.clone(),
        outcomes: s
            .outcomes
            .iter()
            .map(|oc| {
                let other = if oc.favours == s.first {
                    &s.second
                } else {
                    &s.first
                };
                format!(
                    "{} → typical of {}, not of {}",
                    answer_label(s.property, &oc.answer),
                    name_of(&oc.favours),
                    name_of(other)
                )
            })
            .collect(),
        settings: (setting_of(&s.first), setting_of(&s.second)),
    });
    let no_hand_test = id.no_hand_test.as_ref().map(|n| NoHandView {
        first: name_of(&n.first),
        second: name_of(&n.second),
        laboratory: n.laboratory.clone(),
        settings: (setting_of(&n.first), setting_of(&n.second)),
    });
    Ok(ResultsPage {
        title: results_title(&views_all, &d.id),
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
        laboratory: id.laboratory.clone().filter(|l| {
            no_hand_test
                .as_ref()
                .is_none_or(|n| n.laboratory.as_ref() != Some(l))
        }),
        separating,
        no_hand_test,
        cautions: views::cautions(&id),
        observation_conflicts: id.observation_conflicts.clone(),
        answers: views::answers(o, &format!("/identify/{}", d.id)),
        observed_anything: !o.is_empty(),
        more_to_ask: more.map(|(p, _)| p.label()),
        unanswered: remaining(&id, &d),
        for_sample,
    })
}

/// `POST /identify/{id}/discard`.
/// The results page's title: the leading candidate with its probability,
/// then the identification (the start of its id), so tabs and the browser
/// history tell several identifications apart.
fn results_title(top: &[CandidateView], draft: &str) -> String {
    let short: String = draft.chars().take(8).collect();
    match top.first() {
        Some(c) => format!("{} {} · identification {short}…", c.bar.name, c.bar.percent),
        None => format!("Identification {short}…"),
    }
}

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
            "There is no unfinished identification {draft} to discard."
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
    /// The sample it was saved as (id, code), while that sample is live.
    pub saved_as: Option<(String, String)>,
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
    let mut saved = Vec::with_capacity(ds.len());
    for d in &ds {
        saved.push(match d.saved_as.as_deref() {
            Some(sid) => crate::store::samples::get(&st.db, sid)
                .await?
                .filter(|s| !s.deleted)
                .map(|s| (s.id, s.sample_code)),
            None => None,
        });
    }
    let lines = ds
        .iter()
        .zip(saved)
        .map(|(d, saved_as)| {
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
                updated_at: super::samples_pages::local_time(&st.config.time_zone, &d.updated_at),
                answers: Property::ALL
                    .iter()
                    .filter(|p| p.is_observed(&d.observations))
                    .count(),
                leader,
                finished: d.finished_at.is_some(),
                saved_as,
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
