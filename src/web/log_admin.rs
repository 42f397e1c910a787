//! Projects and the CSV upload: the parts of the log a crew lead looks after.
//!
//! - `GET /projects`, `POST /projects`: the projects, each with a short code,
//!   a name and a sample-code scheme; a new one is added with a form.
//! - `GET /projects/{code}/edit`, `POST /projects/{code}/edit`: rename a
//!   project or change its code scheme (sample codes already written never
//!   change; the codes suggested from then on follow the new scheme).
//! - `GET /api/v1/projects`: the same list as JSON; `GET` and
//!   `PUT /api/v1/projects/{code}` read and edit one project.
//! - `GET /samples/import`, `POST /samples/import`: upload a CSV in the
//!   export's columns; every row is checked and every bad one reported with
//!   its line; nothing is written unless every row is good (or when only a
//!   check was asked for).

use askama::Template;
use askama_web::WebTemplate;
use axum::Json;
use axum::Router;
use axum::body::Bytes;
use axum::extract::rejection::BytesRejection;
use axum::extract::{DefaultBodyLimit, Extension, Multipart, Path, State};
use axum::http::{HeaderMap, StatusCode};
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::get;
use serde::Deserialize;

use super::AppState;
use super::api::{BODY_LIMIT, body_bytes, require_json};
use super::csrf::{self, CsrfToken};
use super::error::{ApiError, PageError};
use super::forms::{FieldMessages, FormData};
use crate::engine::FieldError;
use crate::engine::input::object_from_json;
use crate::samples::{check_project_code, valid_code_scheme, valid_project_name};
use crate::store::samples::{self as db, Project, ProjectChange};

/// Largest CSV accepted by the upload page (about 50 000 exported rows).
pub const UPLOAD_LIMIT: usize = 64 * 1024 * 1024;

/// Routes of the projects and the upload.
pub fn router() -> Router<AppState> {
    Router::new()
        .route(
            "/projects",
            get(projects)
                .post(create_project)
                .layer(DefaultBodyLimit::max(BODY_LIMIT)),
        )
        .route(
            "/projects/{code}/edit",
            get(edit_form)
                .post(edit_submit)
                .layer(DefaultBodyLimit::max(BODY_LIMIT)),
        )
        .route("/api/v1/projects", get(projects_json))
        .route(
            "/api/v1/projects/{code}",
            get(project_json)
                .put(project_put)
                .layer(DefaultBodyLimit::max(BODY_LIMIT)),
        )
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
/// `{seq:N}` (N from 1 to 12), at most 40 characters
/// ([`crate::samples::valid_code_scheme`]).
pub fn check_scheme(scheme: &str) -> Result<(), String> {
    valid_code_scheme(scheme).map_err(|e| e.message)
}

/// Checks a project's name and scheme together: the trimmed name, or a
/// message per field (`name`, `code_scheme`).
pub fn check_project(name: &str, scheme: &str) -> Result<String, Vec<FieldError>> {
    let mut errors = Vec::new();
    let name = valid_project_name(name).map_err(|e| errors.push(e)).ok();
    if let Err(e) = valid_code_scheme(scheme) {
        errors.push(e);
    }
    match name {
        Some(n) if errors.is_empty() => Ok(n),
        _ => Err(errors),
    }
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
    if let Err(e) = check_project_code("code", &code) {
        errors.insert(e.field, e.message);
    }
    let checked = check_project(&name, &scheme)
        .map_err(|es| errors.extend(es.into_iter().map(|e| (e.field, e.message))))
        .ok();
    if let Some(n) = checked.filter(|_| errors.is_empty())
        && !db::create_project(&st.db, &code, &n, &scheme).await?
    {
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

/// The edit page of one project.
#[derive(Template, WebTemplate)]
#[template(path = "project_edit.html")]
pub struct EditPage {
    /// Page title.
    pub title: String,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token.
    pub csrf: String,
    /// The project as stored.
    pub project: Project,
    /// Its earlier names and schemes, oldest first.
    pub changes: Vec<ProjectChange>,
    /// Name as typed.
    pub name: String,
    /// Scheme as typed.
    pub scheme: String,
    /// Refusals by field.
    pub errors: FieldMessages,
}

impl EditPage {
    /// The refusal for a field, if any.
    pub fn err(&self, field: &str) -> Option<&str> {
        self.errors.get(field).map(String::as_str)
    }
}

async fn edit_page(
    st: &AppState,
    csrf: &CsrfToken,
    code: &str,
    typed: Option<(&str, &str)>,
    errors: FieldMessages,
) -> PageResult<EditPage> {
    let Some(project) = db::project(&st.db, code).await? else {
        return Err(PageError::NotFound(format!(
            "There is no project {code}. The projects page lists them all."
        )));
    };
    let (name, scheme) = typed.map_or_else(
        || (project.name.clone(), project.code_scheme.clone()),
        |(n, s)| (n.to_string(), s.to_string()),
    );
    Ok(EditPage {
        title: format!("Project {}", project.code),
        base_version: st.engine.base().version.clone(),
        csrf: csrf.0.clone(),
        changes: db::project_changes(&st.db, code).await?,
        project,
        name,
        scheme,
        errors,
    })
}

/// `GET /projects/{code}/edit`.
async fn edit_form(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(code): Path<String>,
) -> PageResult<EditPage> {
    edit_page(&st, &csrf, &code, None, FieldMessages::new()).await
}

/// `POST /projects/{code}/edit` (`_csrf`, `name`, `code_scheme`): 303 to
/// the projects page, or the form again (422) with the values kept.
async fn edit_submit(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(code): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let name = form.get("name").unwrap_or("").to_string();
    let scheme = form.get("code_scheme").unwrap_or("").trim().to_string();
    let errors = match check_project(&name, &scheme) {
        Ok(n) => match db::update_project(&st.db, &code, &n, &scheme).await? {
            Some(_) => return Ok(Redirect::to("/projects").into_response()),
            None => {
                return Err(PageError::NotFound(format!(
                    "There is no project {code}. The projects page lists them all."
                )));
            }
        },
        Err(es) => es.into_iter().map(|e| (e.field, e.message)).collect(),
    };
    let p = edit_page(&st, &csrf, &code, Some((&name, &scheme)), errors).await?;
    Ok((StatusCode::UNPROCESSABLE_ENTITY, p).into_response())
}

fn no_project(code: &str) -> ApiError {
    ApiError::NotFound(FieldError::new(
        "code",
        format!("there is no project {code}; GET /api/v1/projects lists them"),
    ))
}

/// `GET /api/v1/projects/{code}`.
async fn project_json(
    State(st): State<AppState>,
    Path(code): Path<String>,
) -> Result<Json<Project>, ApiError> {
    db::project(&st.db, &code)
        .await?
        .map(Json)
        .ok_or_else(|| no_project(&code))
}

/// The body of `PUT /api/v1/projects/{code}`: the name and the scheme; the
/// other fields a GET returns may be sent back unchanged.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ProjectBody {
    #[serde(default)]
    name: Option<String>,
    #[serde(default)]
    code_scheme: Option<String>,
    #[serde(default)]
    code: Option<serde_json::Value>,
    #[serde(default)]
    created_at: Option<serde_json::Value>,
    #[serde(default)]
    updated_at: Option<serde_json::Value>,
}

fn describe_project_field(shape: &str) -> String {
    match shape {
        "" => "an object with name and code_scheme (code, created_at and updated_at may be sent back as GET returned them)".to_string(),
        "name" => format!("the project's name, 1 to {} characters", crate::samples::MAX_PROJECT_NAME),
        "code_scheme" => "a sample-code scheme: literal text with {year}, {yy} and one {seq:N}, e.g. BV-{yy}-{seq:4}".to_string(),
        _ => "a field of a project (code, name, code_scheme, created_at, updated_at)".to_string(),
    }
}

/// `PUT /api/v1/projects/{code}`: JSON only, from this origin when the
/// client says where it comes from; 200 with the project as stored. Sample
/// codes already written never change.
async fn project_put(
    State(st): State<AppState>,
    Path(code): Path<String>,
    headers: HeaderMap,
    body: std::result::Result<Bytes, BytesRejection>,
) -> Response {
    if !csrf::same_origin(&headers) {
        return (
            StatusCode::FORBIDDEN,
            Json(serde_json::json!({"error": {
                "field": "",
                "message": "this request came from another site, so it was refused and nothing was changed"
            }})),
        )
            .into_response();
    }
    match put_project(&st, &code, &headers, body).await {
        Ok(p) => Json(p).into_response(),
        Err(e) => e.into_response(),
    }
}

async fn put_project(
    st: &AppState,
    code: &str,
    headers: &HeaderMap,
    body: std::result::Result<Bytes, BytesRejection>,
) -> Result<Project, ApiError> {
    require_json(headers)?;
    let bytes = body_bytes(body)?;
    let b: ProjectBody = object_from_json(&bytes, describe_project_field)?;
    let current = db::project(&st.db, code)
        .await?
        .ok_or_else(|| no_project(code))?;
    let stored = serde_json::to_value(&current).map_err(|e| ApiError::Internal(e.to_string()))?;
    for (field, given) in [
        ("code", &b.code),
        ("created_at", &b.created_at),
        ("updated_at", &b.updated_at),
    ] {
        if let Some(v) = given
            && Some(v) != stored.get(field)
        {
            return Err(ApiError::Invalid(FieldError::new(
                field,
                format!(
                    "\"{field}\" is set by the service and cannot be changed; send it back as GET returned it, or leave it out"
                ),
            )));
        }
    }
    let (Some(name), Some(scheme)) = (&b.name, &b.code_scheme) else {
        let missing = if b.name.is_none() {
            "name"
        } else {
            "code_scheme"
        };
        return Err(ApiError::Invalid(FieldError::new(
            missing,
            format!("give {missing}: {}", describe_project_field(missing)),
        )));
    };
    let scheme = scheme.trim();
    let name = check_project(name, scheme).map_err(|mut es| ApiError::Invalid(es.remove(0)))?;
    db::update_project(&st.db, code, &name, scheme)
        .await?
        .ok_or_else(|| no_project(code))
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
    /// The name for a project the import creates, as typed.
    pub name: String,
    /// The code scheme for a project the import creates, as typed.
    pub scheme: String,
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
    new: &crate::import::NewProject,
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
        name: new.name.clone().unwrap_or_default(),
        scheme: new.code_scheme.clone().unwrap_or_default(),
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
    // No project is preset: the file goes where the person says.
    import_page(&st, &csrf, "", &Default::default(), true).await
}

/// `POST /samples/import` (multipart: `_csrf`, `project`, `name`,
/// `code_scheme`, `dry_run`, `file`).
async fn import_upload(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    mut multipart: Multipart,
) -> PageResult<Response> {
    let (mut token, mut project, mut dry_run, mut file) =
        (None, String::new(), false, None::<Vec<u8>>);
    let mut new = crate::import::NewProject::default();
    let mut problem = None;
    loop {
        match multipart.next_field().await {
            Ok(Some(field)) => {
                let name = field.name().unwrap_or("").to_string();
                match field.bytes().await {
                    Ok(bytes) => match name.as_str() {
                        "_csrf" => token = Some(String::from_utf8_lossy(&bytes).trim().to_string()),
                        "project" => project = String::from_utf8_lossy(&bytes).trim().to_string(),
                        "name" => {
                            new.name = Some(String::from_utf8_lossy(&bytes).trim().to_string())
                                .filter(|v| !v.is_empty());
                        }
                        "code_scheme" => {
                            new.code_scheme =
                                Some(String::from_utf8_lossy(&bytes).trim().to_string())
                                    .filter(|v| !v.is_empty());
                        }
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
    let mut p = import_page(&st, &csrf, &project, &new, dry_run).await?;
    let data = match (problem, file) {
        (Some(m), _) => {
            p.problem = Some(m);
            return Ok((StatusCode::UNPROCESSABLE_ENTITY, p).into_response());
        }
        (None, _) if project.is_empty() => {
            p.problem = Some(
                "give the code of the project to import into (an existing one, or a new one to create)"
                    .into(),
            );
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
        &new,
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
        Err(crate::import::RunError::Project(e)) => {
            p.problem = Some(format!("{}: {}", e.field, e.message));
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_scheme_check_accepts_exactly_what_the_code_suggestion_understands() {
        for scheme in [
            "{seq:4}",
            "BV-{yy}-{seq:4}",
            "{year}/{seq:3}a",
            "S{seq}",
            "BV-",
            "{seq:0}",
            "{seq:13}",
            "{seq:x}",
            "{seq:4}-{seq:2}",
            "{month}-{seq:4}",
            "{seq:4",
        ] {
            let s = super::super::samples_pages::parse_scheme(scheme, 2026);
            let understood =
                s.width.is_some() && !s.prefix.contains('{') && !s.suffix.contains('{');
            assert_eq!(check_scheme(scheme).is_ok(), understood, "{scheme}");
        }
    }
}
