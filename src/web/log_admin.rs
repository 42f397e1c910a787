//! Projects and the CSV upload: the parts of the log a crew lead looks after.
//!
//! - `GET /projects`, `POST /projects`: the projects, each with a short code,
//!   a name and a sample-code scheme; a new one is added with a form.
//! - `GET /api/v1/projects`: the same list as JSON.
//! - `GET /samples/import`, `POST /samples/import`: upload a CSV in the
//!   export's columns; every row is checked and every bad one reported with
//!   its line; nothing is written unless every row is good (or when only a
//!   check was asked for).

use askama::Template;
use askama_web::WebTemplate;
use axum::Json;
use axum::Router;
use axum::body::Bytes;
use axum::extract::{DefaultBodyLimit, Extension, Multipart, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::get;

use super::AppState;
use super::csrf::{self, CsrfToken};
use super::error::{ApiError, PageError};
use super::forms::{FieldMessages, FormData};
use crate::samples::valid_project_code;
use crate::store::samples::{self as db, Project};

/// Largest CSV accepted by the upload page (about 50 000 exported rows).
pub const UPLOAD_LIMIT: usize = 64 * 1024 * 1024;

/// Routes of the projects and the upload.
pub fn router() -> Router<AppState> {
    Router::new()
        .route("/projects", get(projects).post(create_project))
        .route("/api/v1/projects", get(projects_json))
        .route(
            "/samples/import",
            get(import_form)
                .post(import_upload)
                .layer(DefaultBodyLimit::max(UPLOAD_LIMIT)),
        )
}

type PageResult<T> = Result<T, PageError>;

/// The projects page.
#[derive(Template, WebTemplate)]
#[template(path = "projects.html")]
pub struct ProjectsPage {
    /// Page title.
    pub title: &'static str,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token.
    pub csrf: String,
    /// Every project.
    pub projects: Vec<Project>,
    /// What was typed into the new-project form.
    pub code: String,
    /// Name as typed.
    pub name: String,
    /// Scheme as typed.
    pub scheme: String,
    /// Refusals by field.
    pub errors: FieldMessages,
}

impl ProjectsPage {
    /// The refusal for a field, if any.
    pub fn err(&self, field: &str) -> Option<&str> {
        self.errors.get(field).map(String::as_str)
    }
}

async fn page(
    st: &AppState,
    csrf: &CsrfToken,
    code: &str,
    name: &str,
    scheme: &str,
    errors: FieldMessages,
) -> PageResult<ProjectsPage> {
    Ok(ProjectsPage {
        title: "Projects",
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        projects: db::projects(&st.db).await?,
        code: code.to_string(),
        name: name.to_string(),
        scheme: scheme.to_string(),
        errors,
    })
}

/// `GET /projects`.
async fn projects(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
) -> PageResult<ProjectsPage> {
    page(&st, &csrf, "", "", "{seq:4}", FieldMessages::new()).await
}

/// `GET /api/v1/projects`.
async fn projects_json(State(st): State<AppState>) -> Result<Response, ApiError> {
    Ok(Json(serde_json::json!({ "projects": db::projects(&st.db).await? })).into_response())
}

/// Checks a code scheme: literal text, `{year}`, `{yy}` and exactly one
/// `{seq:N}` (N from 1 to 12), at most 40 characters.
pub fn check_scheme(scheme: &str) -> Result<(), String> {
    if scheme.chars().count() > 40 {
        return Err("at most 40 characters".into());
    }
    if scheme.chars().any(char::is_control) {
        return Err("control characters are not allowed".into());
    }
    let s = super::samples_pages::parse_scheme(scheme, 2026);
    if s.width.is_none() {
        return Err("the scheme needs a sequence number: {seq:N} with N from 1 to 12 digits, e.g. BV-{yy}-{seq:4}".into());
    }
    if s.prefix.contains('{') || s.suffix.contains('{') {
        return Err(
            "only {year}, {yy} and one {seq:N} are placeholders; remove the other braces".into(),
        );
    }
    Ok(())
}

/// `POST /projects`: add a project.
async fn create_project(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let code = form.get("code").unwrap_or("").to_string();
    let name = form.get("name").unwrap_or("").to_string();
    let scheme = form.get("code_scheme").unwrap_or("").to_string();
    let mut errors = FieldMessages::new();
    if !valid_project_code(&code) {
        errors.insert(
            "code".into(),
            "use 1 to 16 lower-case letters, digits, - or _, starting with a letter or digit"
                .into(),
        );
    }
    if name.trim().is_empty() || name.chars().count() > 120 {
        errors.insert(
            "name".into(),
            "give the project a name of at most 120 characters".into(),
        );
    }
    if let Err(m) = check_scheme(&scheme) {
        errors.insert("code_scheme".into(), m);
    }
    if errors.is_empty() && !db::create_project(&st.db, &code, name.trim(), &scheme).await? {
        errors.insert(
            "code".into(),
            format!("the code {code} is already used by another project"),
        );
    }
    if errors.is_empty() {
        return Ok(Redirect::to("/projects").into_response());
    }
    let p = page(&st, &csrf, &code, &name, &scheme, errors).await?;
    Ok((StatusCode::UNPROCESSABLE_ENTITY, p).into_response())
}

/// The upload page, before and after an upload.
#[derive(Template, WebTemplate)]
#[template(path = "sample_import.html")]
pub struct ImportPage {
    /// Page title.
    pub title: &'static str,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token.
    pub csrf: String,
    /// Project codes for the select.
    pub projects: Vec<String>,
    /// The project chosen.
    pub project: String,
    /// Whether only a check was asked for.
    pub dry_run: bool,
    /// A refusal of the upload as a whole.
    pub problem: Option<String>,
    /// The outcome, after an upload.
    pub outcome: Option<Outcome>,
}

/// What an upload did.
pub struct Outcome {
    /// Rows that passed.
    pub valid: usize,
    /// Rows written.
    pub written: usize,
    /// Refused rows, in words.
    pub errors: Vec<String>,
}

async fn import_page(
    st: &AppState,
    csrf: &CsrfToken,
    project: &str,
    dry_run: bool,
) -> PageResult<ImportPage> {
    Ok(ImportPage {
        title: "Import samples from CSV",
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        projects: db::projects(&st.db)
            .await?
            .into_iter()
            .map(|p| p.code)
            .collect(),
        project: project.to_string(),
        dry_run,
        problem: None,
        outcome: None,
    })
}

/// `GET /samples/import`.
async fn import_form(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
) -> PageResult<ImportPage> {
    import_page(&st, &csrf, "default", true).await
}

/// `POST /samples/import` (multipart: `_csrf`, `project`, `dry_run`, `file`).
async fn import_upload(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    mut multipart: Multipart,
) -> PageResult<Response> {
    let (mut token, mut project, mut dry_run, mut file) =
        (None, String::new(), false, None::<Vec<u8>>);
    let mut problem = None;
    loop {
        match multipart.next_field().await {
            Ok(Some(field)) => {
                let name = field.name().unwrap_or("").to_string();
                match field.bytes().await {
                    Ok(bytes) => match name.as_str() {
                        "_csrf" => token = Some(String::from_utf8_lossy(&bytes).trim().to_string()),
                        "project" => project = String::from_utf8_lossy(&bytes).trim().to_string(),
                        "dry_run" => dry_run = !bytes.is_empty(),
                        "file" => file = Some(bytes.to_vec()),
                        _ => {}
                    },
                    Err(e) => {
                        problem = Some(format!(
                            "the upload could not be read ({e}); files up to {} MB are accepted",
                            UPLOAD_LIMIT / (1024 * 1024)
                        ));
                        break;
                    }
                }
            }
            Ok(None) => break,
            Err(e) => {
                problem = Some(format!(
                    "the upload could not be read ({e}); send the form from this page"
                ));
                break;
            }
        }
    }
    csrf::verify(&csrf, token.as_deref())?;
    let mut p = import_page(
        &st,
        &csrf,
        if project.is_empty() {
            "default"
        } else {
            &project
        },
        dry_run,
    )
    .await?;
    let data = match (problem, file) {
        (Some(m), _) => {
            p.problem = Some(m);
            return Ok((StatusCode::UNPROCESSABLE_ENTITY, p).into_response());
        }
        (None, None) => {
            p.problem = Some("choose a CSV file to import".into());
            return Ok((StatusCode::UNPROCESSABLE_ENTITY, p).into_response());
        }
        (None, Some(d)) if d.is_empty() => {
            p.problem = Some("the file is empty; choose a CSV file with a header row".into());
            return Ok((StatusCode::UNPROCESSABLE_ENTITY, p).into_response());
        }
        (None, Some(d)) => d,
    };
    match crate::import::run(
        &st.db,
        &data,
        &p.project,
        dry_run,
        Some("CSV upload"),
        &|| {},
        &|_| {},
    )
    .await
    {
        Ok(r) => {
            let status = if r.errors.is_empty() {
                StatusCode::OK
            } else {
                StatusCode::UNPROCESSABLE_ENTITY
            };
            p.outcome = Some(Outcome {
                valid: r.valid,
                written: r.written,
                errors: r.errors.iter().map(ToString::to_string).collect(),
            });
            Ok((status, p).into_response())
        }
        Err(crate::import::RunError::File(e)) => {
            p.problem = Some(e.to_string());
            Ok((StatusCode::UNPROCESSABLE_ENTITY, p).into_response())
        }
        Err(crate::import::RunError::Write(
            e @ crate::store::samples::WriteError::ImportConflict,
        )) => {
            p.problem = Some(e.to_string());
            Ok((StatusCode::CONFLICT, p).into_response())
        }
        Err(crate::import::RunError::Write(e)) => Err(PageError::Internal(e.to_string())),
        Err(crate::import::RunError::Store(e)) => Err(e.into()),
    }
}
