//! CSV import: the export's columns back into records.
//!
//! Every row is validated first, and every bad row is reported with its
//! line number and the reason; only a file without a single bad row is
//! written, in one transaction (all or nothing). A file exported by
//! `GET /export/samples.csv` imports into an empty database as the same
//! records: ids, timestamps, revision numbers and the identification
//! snapshots (with their base version) are kept as they were.

use std::collections::HashSet;

use crate::engine::input::{describe_observation_field, object_from_json};
use crate::engine::{Engine, Identification, Observations};
use crate::samples::{SampleInput, valid_project_code};
use crate::store::samples::{ImportItem, Kept, Packed};

/// Rows handed to a checking thread at a time.
const CHUNK: usize = 64;

/// Columns read from the file: the export's (its two convenience columns,
/// the top candidate, are accepted and ignored).
pub use crate::samples::CSV_COLUMNS as COLUMNS;

/// One refused row.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RowError {
    /// Line in the file (1 is the header).
    pub line: u64,
    /// The column at fault, or "" for the row.
    pub column: String,
    /// What is wrong and what is allowed.
    pub message: String,
}

impl std::fmt::Display for RowError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.column.is_empty() {
            write!(f, "line {}: {}", self.line, self.message)
        } else {
            write!(f, "line {}: {}: {}", self.line, self.column, self.message)
        }
    }
}

/// The outcome of reading a file.
pub struct Checked {
    /// Rows ready to write, in the order they will be written.
    pub items: Vec<ImportItem>,
    /// The file line of each item.
    pub lines: Vec<u64>,
    /// Every refused row.
    pub errors: Vec<RowError>,
}

fn err(line: u64, column: &str, message: impl Into<String>) -> RowError {
    RowError {
        line,
        column: column.to_string(),
        message: message.into(),
    }
}

/// Reads and validates a whole CSV file for `project`. `taken` holds the
/// codes already used in that project; codes repeated inside the file are
/// refused too. `tick` is called once per row checked.
///
/// The rows are checked on every core (reading the identification
/// snapshots and compressing them is most of the work of an import); the
/// verdicts come back in file order, so the report is the same whatever
/// the number of threads.
pub fn check(
    data: &[u8],
    project: &str,
    taken: &HashSet<String>,
    engine: &Engine,
    tick: &(dyn Fn() + Sync),
) -> Result<Checked, RowError> {
    if let Err(e) = crate::samples::check_project_code("project", project) {
        return Err(err(0, "", e.message));
    }
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(false)
        .from_reader(data);
    let headers = rdr
        .headers()
        .map_err(|e| err(1, "", format!("the header row cannot be read: {e}")))?
        .clone();
    let mut index = std::collections::HashMap::new();
    for (i, h) in headers.iter().enumerate() {
        let h = h.trim().trim_start_matches('\u{feff}');
        if !COLUMNS.contains(&h) {
            return Err(err(
                1,
                h,
                format!(
                    "unknown column; the columns are those of the CSV export: {}",
                    COLUMNS.join(", ")
                ),
            ));
        }
        if index.insert(h.to_string(), i).is_some() {
            return Err(err(1, h, "this column appears twice"));
        }
    }
    if !index.contains_key("sample_code") {
        return Err(err(1, "sample_code", "the file needs a sample_code column"));
    }
    let verdicts = check_rows(data, rdr, &index, project, engine, tick);
    let mut seen: HashSet<String> = HashSet::new();
    let mut ids: HashSet<String> = HashSet::new();
    let mut out = Checked {
        items: Vec::new(),
        lines: Vec::new(),
        errors: Vec::new(),
    };
    let mut lines = Vec::new();
    for verdict in verdicts {
        match verdict {
            Ok((line, item)) => {
                let code = item.sample.sample_code.clone();
                if taken.contains(&code) {
                    out.errors.push(err(
                        line,
                        "sample_code",
                        format!("{code} is already used in project {project}"),
                    ));
                } else if !seen.insert(code.clone()) {
                    out.errors.push(err(
                        line,
                        "sample_code",
                        format!("{code} appears more than once in this file"),
                    ));
                } else if let Some(id) = &item.keep.id
                    && !ids.insert(id.clone())
                {
                    out.errors.push(err(
                        line,
                        "id",
                        format!("{id} appears more than once in this file"),
                    ));
                } else {
                    out.items.push(item);
                    lines.push(line);
                }
            }
            Err(e) => out.errors.push(e),
        }
    }
    // Records that carry their creation time take their place in the log's
    // creation order (the list is newest first by insertion), so an
    // exported file imports in the order it was made. The export lists
    // newest first, so rows with equal times go in reverse file order; rows
    // without a time follow in file order (oldest first, as people write).
    let mut indexed: Vec<(usize, (u64, ImportItem))> =
        lines.into_iter().zip(out.items).enumerate().collect();
    indexed.sort_by(
        |(i, (_, a)), (j, (_, b))| match (&a.keep.created_at, &b.keep.created_at) {
            (Some(x), Some(y)) => x.cmp(y).then(j.cmp(i)),
            (Some(_), None) => std::cmp::Ordering::Less,
            (None, Some(_)) => std::cmp::Ordering::Greater,
            (None, None) => i.cmp(j),
        },
    );
    (out.lines, out.items) = indexed.into_iter().map(|(_, it)| it).unzip();
    Ok(out)
}

type Verdict = Result<(u64, ImportItem), RowError>;

/// Checks every record of the reader: the calling thread reads the file
/// and hands out chunks of rows, one thread per core checks them. The
/// verdicts come back in file order.
fn check_rows(
    data: &[u8],
    mut rdr: csv::Reader<&[u8]>,
    index: &std::collections::HashMap<String, usize>,
    project: &str,
    engine: &Engine,
    tick: &(dyn Fn() + Sync),
) -> Vec<Verdict> {
    let workers = std::thread::available_parallelism().map_or(1, std::num::NonZero::get);
    let (send, receive) = std::sync::mpsc::sync_channel::<(
        usize,
        Vec<(u64, csv::Result<csv::StringRecord>)>,
    )>(workers * 2);
    let receive = std::sync::Mutex::new(receive);
    let done: std::sync::Mutex<Vec<(usize, Vec<Verdict>)>> = std::sync::Mutex::new(Vec::new());
    std::thread::scope(|scope| {
        for _ in 0..workers {
            scope.spawn(|| {
                loop {
                    // The lock is held only to take the next chunk.
                    let next = receive.lock().map_or(None, |r| r.recv().ok());
                    let Some((n, chunk)) = next else { break };
                    let verdicts: Vec<Verdict> = chunk
                        .into_iter()
                        .map(|(line, rec)| {
                            tick();
                            check_record(line, rec, index, project, engine)
                        })
                        .collect();
                    if let Ok(mut d) = done.lock() {
                        d.push((n, verdicts));
                    }
                }
            });
        }
        let mut lines = Lines::default();
        let mut records = rdr.records().map(|rec| {
            let byte = match &rec {
                Ok(r) => r.position().map(csv::Position::byte),
                Err(e) => e.position().map(csv::Position::byte),
            };
            (byte.map_or(0, |b| lines.at(data, b)), rec)
        });
        let mut n = 0;
        loop {
            let chunk: Vec<_> = records.by_ref().take(CHUNK).collect();
            if chunk.is_empty() || send.send((n, chunk)).is_err() {
                break;
            }
            n += 1;
        }
        drop(send);
    });
    let mut done = done.into_inner().unwrap_or_default();
    done.sort_unstable_by_key(|(n, _)| *n);
    done.into_iter().flat_map(|(_, v)| v).collect()
}

/// Line numbers of record starts, counted as the file is read.
///
/// The csv reader's own line count lags by one after a CRLF line end (it
/// ends the record at the CR and counts the LF with the next record, and
/// blank lines are reported with the record after them), and
/// RFC 4180 files, the export's among them, end their lines with CRLF. So
/// the line is counted here from the record's byte offset.
#[derive(Default)]
struct Lines {
    byte: usize,
    line: u64,
}

impl Lines {
    /// The 1-based line on which the record at `byte` starts (offsets
    /// only grow as the file is read).
    fn at(&mut self, data: &[u8], byte: u64) -> u64 {
        let mut start = usize::try_from(byte).unwrap_or(usize::MAX).min(data.len());
        // The reader may report the record from where it stopped: the LF
        // of the previous line's CRLF, or blank lines it skipped. None of
        // those bytes can begin a record, so the record begins after them.
        while matches!(data.get(start), Some(b'\n' | b'\r')) {
            start += 1;
        }
        let from = self.byte.min(start);
        self.line += data[from..start].iter().filter(|b| **b == b'\n').count() as u64;
        self.byte = start;
        self.line + 1
    }
}

fn check_record(
    line: u64,
    rec: csv::Result<csv::StringRecord>,
    index: &std::collections::HashMap<String, usize>,
    project: &str,
    engine: &Engine,
) -> Verdict {
    let rec = rec.map_err(|e| err(line, "", format!("not a well-formed CSV row: {e}")))?;
    let cells = Cells { rec: &rec, index };
    row(line, &cells, project, engine.base(), engine).map(|item| (line, item))
}

/// The cells of one row, by column name; blank cells read as absent, and
/// the export's quote before a formula character is taken away
/// ([`crate::samples::csv_cell_in`]).
struct Cells<'a> {
    rec: &'a csv::StringRecord,
    index: &'a std::collections::HashMap<String, usize>,
}

impl<'a> Cells<'a> {
    fn get(&self, column: &str) -> Option<&'a str> {
        self.index
            .get(column)
            .and_then(|&i| self.rec.get(i))
            .map(|v| crate::samples::csv_cell_in(v.trim()).trim())
            .filter(|v| !v.is_empty())
    }
}

fn number(line: u64, column: &str, v: Option<&str>) -> Result<Option<f64>, RowError> {
    v.map(|s| {
        s.parse::<f64>()
            .map_err(|_| err(line, column, format!("\"{s}\" is not a number")))
    })
    .transpose()
}

fn row(
    line: u64,
    cells: &Cells<'_>,
    project: &str,
    base: &crate::base::Base,
    engine: &Engine,
) -> Result<ImportItem, RowError> {
    if let Some(p) = cells.get("project")
        && p != project
    {
        return Err(err(
            line,
            "project",
            format!("the row is for project {p}, but the import is into {project}"),
        ));
    }
    let observations: Option<Observations> = match cells.get("observations") {
        None => None,
        Some(json) => Some(
            object_from_json::<Observations>(json.as_bytes(), describe_observation_field)
                .and_then(|o| {
                    o.validate()
                        .map(|()| o)
                        .map_err(crate::engine::input::InputError::Invalid)
                })
                .map_err(|e| {
                    let fe = e.field_error();
                    let col = if fe.field.is_empty() {
                        "observations".to_string()
                    } else {
                        format!("observations.{}", fe.field)
                    };
                    err(line, &col, fe.message.clone())
                })?,
        ),
    };
    let setting = match cells.get("setting") {
        None => None,
        Some(s) => Some(
            <crate::base::vocab::Setting as crate::base::vocab::Vocab>::parse(s).ok_or_else(
                || {
                    err(
                        line,
                        "setting",
                        format!(
                            "\"{s}\" is not a setting; use one of {}",
                            <crate::base::vocab::Setting as crate::base::vocab::Vocab>::allowed()
                        ),
                    )
                },
            )?,
        ),
    };
    let input = SampleInput {
        project: Some(project.to_string()),
        sample_code: cells.get("sample_code").map(str::to_string),
        collected_on: cells.get("collected_on").map(str::to_string),
        collector: cells.get("collector").map(str::to_string),
        station: cells.get("station").map(str::to_string),
        latitude: number(line, "latitude", cells.get("latitude"))?,
        longitude: number(line, "longitude", cells.get("longitude"))?,
        coordinate_uncertainty_m: number(
            line,
            "coordinate_uncertainty_m",
            cells.get("coordinate_uncertainty_m"),
        )?,
        setting,
        lithology: cells.get("lithology").map(str::to_string),
        observations,
        field_id: cells.get("field_id").map(str::to_string),
        notes: cells.get("notes").map(str::to_string),
        ..Default::default()
    };
    let sample = input
        // No "today" here: a file keeps the dates it was written with
        // (another laptop's zone may already be a day ahead).
        .validate(|id| base.entry(id).is_some(), None)
        .map_err(|e| err(line, &e.field, e.message))?;
    // A snapshot from the file is read in full (so a damaged one is
    // refused here) and stored as the service writes it, so every stored
    // document has the one shape whatever the file's spacing or extras.
    let snapshot = match cells.get("identification") {
        Some(json) => {
            let identification: Identification = serde_json::from_str(json).map_err(|e| {
                err(
                    line,
                    "identification",
                    format!("not an identification as the export writes it: {e}"),
                )
            })?;
            Packed::of(&identification)
        }
        None => Packed::of(&engine.identify(&sample.observations)),
    };
    if let Some(bv) = cells.get("base_version")
        && bv != snapshot.base_version
    {
        return Err(err(
            line,
            "base_version",
            "differs from the base version inside the identification",
        ));
    }
    let id = cells
        .get("id")
        .map(|s| {
            uuid::Uuid::try_parse(s)
                .map(|u| u.to_string())
                .map_err(|_| err(line, "id", format!("\"{s}\" is not a UUID")))
        })
        .transpose()?;
    let ts = |c: &str| -> Result<Option<String>, RowError> {
        match cells.get(c) {
            None => Ok(None),
            Some(t)
                if t.len() >= 20
                    && crate::samples::valid_iso_date(&t[..10])
                    && t.as_bytes()[10] == b'T'
                    && t.ends_with('Z') =>
            {
                Ok(Some(t.to_string()))
            }
            Some(t) => Err(err(
                line,
                c,
                format!("\"{t}\" is not an ISO 8601 UTC time such as 2026-07-14T09:30:00.000Z"),
            )),
        }
    };
    let revision = match cells.get("revision") {
        None => None,
        Some(r) => Some(r.parse::<i64>().ok().filter(|n| *n >= 1).ok_or_else(|| {
            err(
                line,
                "revision",
                format!("\"{r}\" is not a revision number"),
            )
        })?),
    };
    Ok(ImportItem {
        sample,
        snapshot,
        keep: Kept {
            revision,
            id,
            created_at: ts("created_at")?,
            updated_at: ts("updated_at")?,
        },
    })
}

/// What an import did.
#[derive(Debug)]
pub struct ImportReport {
    /// Rows that passed every check.
    pub valid: usize,
    /// Rows written (0 on a dry run or when any row was refused).
    pub written: usize,
    /// Every refused row.
    pub errors: Vec<RowError>,
}

/// The name and code scheme to give the project when the import creates
/// it. Either may be left out: a new project is then named by its code
/// and numbers its samples `{seq:4}`. When the project exists already,
/// a name or scheme that differs from its own is refused (the import never
/// changes a project; the projects page does).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct NewProject {
    /// The project's name.
    pub name: Option<String>,
    /// The project's sample-code scheme.
    pub code_scheme: Option<String>,
}

/// The scheme of a project the import creates without being given one.
pub const DEFAULT_SCHEME: &str = "{seq:4}";

/// Why an import could not run at all.
#[derive(Debug, thiserror::Error)]
pub enum RunError {
    /// The file as a whole is unusable (header, project code).
    #[error("{0}")]
    File(RowError),
    /// The project's name or scheme is refused; the field is `name` or
    /// `code_scheme`.
    #[error("{}", .0.message)]
    Project(crate::engine::FieldError),
    /// Writing failed; nothing was written.
    #[error("{0}")]
    Write(#[from] crate::store::samples::WriteError),
    /// The store failed.
    #[error("{0}")]
    Store(#[from] crate::store::StoreError),
}

/// Checks the name and scheme for `project`; `existing` is the project
/// when it exists. The name and scheme to create it with, or `None` when
/// it exists already.
pub fn project_settings(
    project: &str,
    new: &NewProject,
    existing: Option<&crate::store::samples::Project>,
) -> Result<Option<(String, String)>, crate::engine::FieldError> {
    use crate::engine::FieldError;
    let blank = |v: &Option<String>| {
        v.as_deref()
            .map(str::trim)
            .filter(|v| !v.is_empty())
            .map(str::to_string)
    };
    let name = blank(&new.name)
        .map(|n| crate::samples::valid_project_name(&n))
        .transpose()?;
    let scheme = blank(&new.code_scheme);
    if let Some(s) = &scheme {
        crate::samples::valid_code_scheme(s)?;
    }
    let Some(p) = existing else {
        return Ok(Some((
            name.unwrap_or_else(|| project.to_string()),
            scheme.unwrap_or_else(|| DEFAULT_SCHEME.to_string()),
        )));
    };
    let edit = format!("change it on the projects page (/projects/{project}/edit)");
    if let Some(n) = name
        && n != p.name
    {
        return Err(FieldError::new(
            "name",
            format!(
                "project {project} exists already, named \"{}\"; a name here only names a new project. Leave it blank, or {edit}",
                p.name
            ),
        ));
    }
    if let Some(s) = scheme
        && s != p.code_scheme
    {
        return Err(FieldError::new(
            "code_scheme",
            format!(
                "project {project} exists already, with the code scheme {}; a scheme here only applies to a new project. Leave it blank, or {edit}",
                p.code_scheme
            ),
        ));
    }
    Ok(None)
}

/// Checks every row of `data` and, when none is refused and this is not a
/// dry run, writes them all in one transaction (creating the project, with
/// the name and scheme of `new`, when it does not exist). `checked` is told
/// after each row read, `written` after each row written.
#[allow(clippy::too_many_arguments)]
pub async fn run(
    pool: &sqlx::SqlitePool,
    data: &[u8],
    project: &str,
    new: &NewProject,
    dry_run: bool,
    author: Option<&str>,
    checked: &(dyn Fn() + Sync),
    written: &(dyn Fn(u64) + Sync),
) -> Result<ImportReport, RunError> {
    let existing = if valid_project_code(project) {
        crate::store::samples::project(pool, project).await?
    } else {
        None
    };
    let create = project_settings(project, new, existing.as_ref()).map_err(RunError::Project)?;
    let taken: HashSet<String> = crate::store::samples::codes_in(pool, project)
        .await?
        .into_iter()
        .collect();
    let mut c = check(data, project, &taken, Engine::builtin(), checked).map_err(RunError::File)?;
    // Ids from an export must be new to this log (a file imported twice,
    // or into the log it came from, would otherwise clash at the write).
    let file_ids: Vec<&str> = c
        .items
        .iter()
        .filter_map(|i| i.keep.id.as_deref())
        .collect();
    let present: HashSet<String> = crate::store::samples::ids_present(pool, &file_ids)
        .await?
        .into_iter()
        .collect();
    let mut valid = c.items.len();
    for (it, line) in c.items.iter().zip(&c.lines) {
        if let Some(id) = it.keep.id.as_deref()
            && present.contains(id)
        {
            valid -= 1;
            c.errors.push(err(
                *line,
                "id",
                format!(
                    "{id} is already in the log (was this file imported before?); leave the id blank to give the row a new one"
                ),
            ));
        }
    }
    c.errors.sort_by_key(|e| e.line);
    if !c.errors.is_empty() || dry_run {
        return Ok(ImportReport {
            valid,
            written: 0,
            errors: c.errors,
        });
    }
    if let Some((name, scheme)) = &create {
        crate::store::samples::create_project(pool, project, name, scheme).await?;
    }
    let n = crate::store::samples::import_all(pool, &c.items, author, written).await?;
    Ok(ImportReport {
        valid,
        written: n,
        errors: Vec::new(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn run(csv: &str) -> Checked {
        check(
            csv.as_bytes(),
            "bv",
            &HashSet::from(["TAKEN".to_string()]),
            Engine::builtin(),
            &|| {},
        )
        .expect("readable")
    }

    #[test]
    fn every_bad_row_is_reported_with_its_line() {
        let c = run("sample_code,latitude,longitude,collected_on,field_id\n\
                     A1,45.1,7.2,2026-07-01,muscovite\n\
                     A2,95,7.2,2026-07-01,\n\
                     A3,,,2026-02-30,\n\
                     TAKEN,,,,\n\
                     A1,,,,\n\
                     A6,,,,mica\n");
        assert_eq!(c.items.len(), 1);
        let lines: Vec<(u64, &str)> = c
            .errors
            .iter()
            .map(|e| (e.line, e.column.as_str()))
            .collect();
        assert_eq!(
            lines,
            vec![
                (3, "latitude"),
                (4, "collected_on"),
                (5, "sample_code"),
                (6, "sample_code"),
                (7, "field_id")
            ]
        );
    }

    #[test]
    fn lines_are_counted_the_same_with_crlf_and_lf_and_across_quoted_line_breaks() {
        let lf =
            "sample_code,notes,latitude,longitude\nA1,,1,1\nA2,\"two\nlines\",95,1\n\nA3,,96,1\n";
        let crlf = lf.replace('\n', "\r\n");
        for csv in [lf.to_string(), crlf] {
            let c = run(&csv);
            let lines: Vec<u64> = c.errors.iter().map(|e| e.line).collect();
            // A2 starts on line 3 and spans two lines; after a blank
            // line, A3 is on line 6.
            assert_eq!(lines, vec![3, 6], "{csv:?}");
            assert_eq!(c.lines, vec![2]);
        }
    }

    #[test]
    fn an_unknown_column_stops_the_import_before_any_row() {
        let e = check(
            b"sample_code,colour\nA1,green\n",
            "bv",
            &HashSet::new(),
            Engine::builtin(),
            &|| {},
        )
        .err()
        .expect("refused");
        assert_eq!((e.line, e.column.as_str()), (1, "colour"));
    }

    #[test]
    fn observations_are_checked_like_the_api() {
        let c = run("sample_code,observations\nB1,\"{\"\"cleavage\"\": \"\"perfect\"\"}\"\n");
        assert_eq!(c.errors.len(), 1);
        assert_eq!(c.errors[0].column, "observations.cleavage");
    }

    #[test]
    fn a_project_code_with_a_hidden_character_is_named_by_its_code_point() {
        let e = check(
            b"sample_code\nA1\n",
            "bv\u{202E}",
            &HashSet::new(),
            Engine::builtin(),
            &|| {},
        )
        .err()
        .expect("refused");
        assert!(e.message.contains("U+202E"), "{}", e.message);
    }

    #[test]
    fn a_row_for_another_project_is_refused() {
        let c = run("project,sample_code\nother,C1\n");
        assert_eq!(c.errors[0].column, "project");
    }
    fn stored(name: &str, scheme: &str) -> crate::store::samples::Project {
        crate::store::samples::Project {
            code: "bv".into(),
            name: name.into(),
            code_scheme: scheme.into(),
            created_at: "2026-07-01T08:00:00.000Z".into(),
            updated_at: None,
        }
    }

    #[test]
    fn a_new_project_takes_the_name_and_scheme_given_or_the_defaults() {
        let given = NewProject {
            name: Some(" Ridge survey ".into()),
            code_scheme: Some("RG-{seq:3}".into()),
        };
        assert_eq!(
            project_settings("bv", &given, None),
            Ok(Some(("Ridge survey".into(), "RG-{seq:3}".into())))
        );
        assert_eq!(
            project_settings("bv", &NewProject::default(), None),
            Ok(Some(("bv".into(), DEFAULT_SCHEME.into())))
        );
        let bad = NewProject {
            code_scheme: Some("RG-".into()),
            ..Default::default()
        };
        assert_eq!(
            project_settings("bv", &bad, None)
                .expect_err("no sequence")
                .field,
            "code_scheme"
        );
    }

    #[test]
    fn an_existing_project_refuses_another_name_or_scheme_and_takes_its_own() {
        let p = stored("Ridge survey", "RG-{seq:3}");
        assert_eq!(
            project_settings("bv", &NewProject::default(), Some(&p)),
            Ok(None)
        );
        let same = NewProject {
            name: Some("Ridge survey".into()),
            code_scheme: Some("RG-{seq:3}".into()),
        };
        assert_eq!(project_settings("bv", &same, Some(&p)), Ok(None));
        for (new, field) in [
            (
                NewProject {
                    name: Some("Other".into()),
                    ..Default::default()
                },
                "name",
            ),
            (
                NewProject {
                    code_scheme: Some("X-{seq:2}".into()),
                    ..Default::default()
                },
                "code_scheme",
            ),
        ] {
            let e = project_settings("bv", &new, Some(&p)).expect_err("refused");
            assert_eq!(e.field, field);
            assert!(e.message.contains("/projects/bv/edit"), "{}", e.message);
        }
    }

    #[test]
    fn a_quoted_formula_cell_is_read_without_its_quote() {
        let c = run("sample_code,notes,latitude,longitude\n'=A1,'-5 m,'-45.5,-7.25\n");
        assert!(c.errors.is_empty(), "{:?}", c.errors);
        let s = &c.items[0].sample;
        assert_eq!(s.sample_code, "=A1");
        assert_eq!(s.notes.as_deref(), Some("-5 m"));
        assert_eq!((s.latitude, s.longitude), (Some(-45.5), Some(-7.25)));
    }
}
