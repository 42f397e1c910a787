//! The sample log in SQLite: create, read, update with optimistic
//! concurrency, tombstone and restore, history, filtered keyset listing.
//!
//! Every change runs in one transaction that updates the live row and
//! appends the whole new state to `sample_revisions`, so nothing is ever
//! overwritten without a trace. Identification snapshots live once in
//! `snapshots`; the live row and each revision point at theirs, and a
//! change that leaves the observations alone shares the one it had.

use serde::{Deserialize, Serialize};
use sqlx::{QueryBuilder, Sqlite, SqlitePool};

use super::{Context, StoreError};
use crate::base::vocab::Setting;
use crate::engine::{Identification, Observations};
use crate::samples::ValidSample;

/// A stored sample record: the contract's fields plus what the service adds.
///
/// `I` is the identification: the identify response for a whole record,
/// `()` (JSON null) for the other fields of a revision document whose
/// snapshot is stored apart.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct SampleRecord<I = Identification> {
    /// UUID, never changes.
    pub id: String,
    /// Project code.
    pub project: String,
    /// The crew's label, unique within the project.
    pub sample_code: String,
    /// ISO 8601 date.
    pub collected_on: Option<String>,
    /// Collector.
    pub collector: Option<String>,
    /// Station.
    pub station: Option<String>,
    /// WGS 84 latitude.
    pub latitude: Option<f64>,
    /// WGS 84 longitude.
    pub longitude: Option<f64>,
    /// Coordinate uncertainty, metres.
    pub coordinate_uncertainty_m: Option<f64>,
    /// Setting.
    pub setting: Option<Setting>,
    /// Lithology.
    pub lithology: Option<String>,
    /// Observations (the identify request object).
    pub observations: Observations,
    /// Field identification (an entry id) or null.
    pub field_id: Option<String>,
    /// Notes.
    pub notes: Option<String>,
    /// When created (ISO 8601 UTC).
    pub created_at: String,
    /// When last changed.
    pub updated_at: String,
    /// 1 on creation, +1 on every change.
    pub revision: i64,
    /// The identify response computed when the record was saved.
    pub identification: I,
    /// The property-base version of that identification.
    pub base_version: String,
    /// Whether the record is a tombstone.
    pub deleted: bool,
    /// When it was deleted.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub deleted_at: Option<String>,
}

#[derive(sqlx::FromRow)]
struct Row {
    seq: i64,
    id: String,
    project: String,
    sample_code: String,
    revision: i64,
    created_at: String,
    updated_at: String,
    deleted_at: Option<String>,
    collected_on: Option<String>,
    collector: Option<String>,
    station: Option<String>,
    latitude: Option<f64>,
    longitude: Option<f64>,
    coordinate_uncertainty_m: Option<f64>,
    setting: Option<String>,
    lithology: Option<String>,
    observations: String,
    field_id: Option<String>,
    notes: Option<String>,
    snapshot: Option<i64>,
    identification: Option<Vec<u8>>,
    base_version: String,
}

const COLUMNS: &str = "seq, id, project, sample_code, revision, created_at, updated_at, deleted_at, \
    collected_on, collector, station, latitude, longitude, coordinate_uncertainty_m, setting, lithology, \
    observations, field_id, notes, snapshot, base_version";

/// The snapshot body of a row, selected beside [`COLUMNS`].
const IDENTIFICATION: &str =
    "(SELECT body FROM snapshots WHERE snapshots.id = samples.snapshot) AS identification";

const NOW: &str = "strftime('%Y-%m-%dT%H:%M:%fZ', 'now')";

/// Compresses a JSON document for a BLOB column (zlib, the fast level:
/// the documents are repetitive and level 1 already takes them to about a
/// fifth, at a fraction of the time of the default level).
fn pack(json: &str) -> Vec<u8> {
    use std::io::Write;
    let mut enc = flate2::write::ZlibEncoder::new(
        Vec::with_capacity(json.len() / 4),
        flate2::Compression::fast(),
    );
    // Writing into a Vec cannot fail.
    let _ = enc.write_all(json.as_bytes());
    enc.finish().unwrap_or_default()
}

/// The JSON document of a BLOB column written by [`pack`].
fn unpack(id: &str, what: &'static str, blob: &[u8]) -> Result<String, StoreError> {
    use std::io::Read;
    let mut out = String::with_capacity(blob.len() * 5);
    flate2::read::ZlibDecoder::new(blob)
        .read_to_string(&mut out)
        .map_err(|e| corrupt(id, what, e))?;
    Ok(out)
}

fn corrupt(id: &str, what: &'static str, e: impl std::fmt::Display) -> StoreError {
    StoreError::Corrupt {
        what,
        id: id.to_string(),
        detail: e.to_string(),
    }
}

/// An identification snapshot ready to store: its base version and its
/// JSON document compressed.
#[derive(Clone, Debug)]
pub struct Packed {
    /// The base version inside the document.
    pub base_version: String,
    /// The identify response as JSON, zlib.
    pub body: Vec<u8>,
}

impl Packed {
    /// Packs an identification.
    pub fn of(identification: &Identification) -> Packed {
        // Serialising a plain data struct into a String cannot fail.
        let json = serde_json::to_string(identification).unwrap_or_default();
        Packed {
            base_version: identification.base_version.clone(),
            body: pack(&json),
        }
    }
}

impl<I> SampleRecord<I> {
    /// The same record with another identification.
    fn with_identification<J>(self, identification: J) -> SampleRecord<J> {
        SampleRecord {
            id: self.id,
            project: self.project,
            sample_code: self.sample_code,
            collected_on: self.collected_on,
            collector: self.collector,
            station: self.station,
            latitude: self.latitude,
            longitude: self.longitude,
            coordinate_uncertainty_m: self.coordinate_uncertainty_m,
            setting: self.setting,
            lithology: self.lithology,
            observations: self.observations,
            field_id: self.field_id,
            notes: self.notes,
            created_at: self.created_at,
            updated_at: self.updated_at,
            revision: self.revision,
            identification,
            base_version: self.base_version,
            deleted: self.deleted,
            deleted_at: self.deleted_at,
        }
    }
}

impl SampleRecord {
    /// Every field but the identification (a revision document's body).
    fn head(&self) -> SampleRecord<()> {
        SampleRecord {
            id: self.id.clone(),
            project: self.project.clone(),
            sample_code: self.sample_code.clone(),
            collected_on: self.collected_on.clone(),
            collector: self.collector.clone(),
            station: self.station.clone(),
            latitude: self.latitude,
            longitude: self.longitude,
            coordinate_uncertainty_m: self.coordinate_uncertainty_m,
            setting: self.setting,
            lithology: self.lithology.clone(),
            observations: self.observations.clone(),
            field_id: self.field_id.clone(),
            notes: self.notes.clone(),
            created_at: self.created_at.clone(),
            updated_at: self.updated_at.clone(),
            revision: self.revision,
            identification: (),
            base_version: self.base_version.clone(),
            deleted: self.deleted,
            deleted_at: self.deleted_at.clone(),
        }
    }
}

impl Row {
    /// The row's snapshot id (every row written by this store has one).
    fn snapshot_id(&self) -> Result<i64, StoreError> {
        self.snapshot
            .ok_or_else(|| corrupt(&self.id, "sample snapshot", "the row has no snapshot"))
    }

    fn into_record(self) -> Result<(i64, SampleRecord), StoreError> {
        self.into_record_as()
    }

    /// The record, with its identification read as `I`: the whole
    /// identify response, the stored JSON as it is ([`Raw`]), or only what
    /// a summary needs ([`Leader`]).
    fn into_record_as<I: serde::de::DeserializeOwned>(
        self,
    ) -> Result<(i64, SampleRecord<I>), StoreError> {
        let setting = match self.setting.as_deref() {
            None => None,
            Some(s) => Some(
                <Setting as crate::base::vocab::Vocab>::parse(s)
                    .ok_or_else(|| corrupt(&self.id, "sample setting", s))?,
            ),
        };
        let observations = serde_json::from_str(&self.observations)
            .map_err(|e| corrupt(&self.id, "sample observations", e))?;
        let body = self.identification.as_deref().ok_or_else(|| {
            corrupt(
                &self.id,
                "sample identification",
                "the row's snapshot is missing",
            )
        })?;
        let identification =
            serde_json::from_str(&unpack(&self.id, "sample identification", body)?)
                .map_err(|e| corrupt(&self.id, "sample identification", e))?;
        Ok((
            self.seq,
            SampleRecord {
                project: self.project,
                sample_code: self.sample_code,
                collected_on: self.collected_on,
                collector: self.collector,
                station: self.station,
                latitude: self.latitude,
                longitude: self.longitude,
                coordinate_uncertainty_m: self.coordinate_uncertainty_m,
                setting,
                lithology: self.lithology,
                observations,
                field_id: self.field_id,
                notes: self.notes,
                created_at: self.created_at,
                updated_at: self.updated_at,
                revision: self.revision,
                identification,
                base_version: self.base_version,
                deleted: self.deleted_at.is_some(),
                deleted_at: self.deleted_at,
                id: self.id,
            },
        ))
    }
}

/// Why a write was refused.
#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    /// The code is taken in that project.
    #[error("sample code {code} is already used in project {project}")]
    CodeTaken {
        /// Project.
        project: String,
        /// Code.
        code: String,
    },
    /// No such project.
    #[error("there is no project {0}")]
    UnknownProject(String),
    /// No such sample.
    #[error("there is no sample {0}")]
    NotFound(String),
    /// The sample is a tombstone.
    #[error("sample {0} is deleted")]
    Deleted(String),
    /// The client's revision is not the current one.
    #[error("revision {expected} is not the current revision {}", current.revision)]
    Stale {
        /// What the client started from.
        expected: i64,
        /// The record as it is now.
        current: Box<SampleRecord>,
    },
    /// An imported row's code or id was taken by a write that came in
    /// after the rows were checked; nothing of the import was written.
    #[error(
        "a sample code or id in the file was taken while the import ran; nothing was written, check the file again"
    )]
    ImportConflict,
    /// The store failed.
    #[error(transparent)]
    Store(#[from] StoreError),
}

fn classify(e: sqlx::Error, v: &ValidSample) -> WriteError {
    if let Some(db) = e.as_database_error() {
        match db.kind() {
            sqlx::error::ErrorKind::UniqueViolation => {
                return WriteError::CodeTaken {
                    project: v.project.clone(),
                    code: v.sample_code.clone(),
                };
            }
            sqlx::error::ErrorKind::ForeignKeyViolation => {
                return WriteError::UnknownProject(v.project.clone());
            }
            _ => {}
        }
    }
    WriteError::Store(StoreError::Sqlx {
        context: "writing a sample",
        source: e,
    })
}

/// What a revision records.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, utoipa::ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum Action {
    /// First state.
    Create,
    /// A whole-record update.
    Update,
    /// Tombstoned.
    Delete,
    /// Brought back.
    Restore,
    /// Created by a CSV import.
    Import,
}

impl Action {
    fn as_str(self) -> &'static str {
        match self {
            Action::Create => "create",
            Action::Update => "update",
            Action::Delete => "delete",
            Action::Restore => "restore",
            Action::Import => "import",
        }
    }
}

/// One earlier (or the current) state of a record.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Revision {
    /// Revision number.
    pub revision: i64,
    /// When.
    pub recorded_at: String,
    /// Who, as given.
    pub author: Option<String>,
    /// What kind of change.
    pub action: Action,
    /// The whole record after the change.
    pub record: SampleRecord,
}

/// The revision document of a state: every field but the identification,
/// which the revision's snapshot holds.
fn revision_body(head: &SampleRecord<()>) -> Result<Vec<u8>, StoreError> {
    serde_json::to_string(head)
        .map(|j| pack(&j))
        .map_err(|e| corrupt(&head.id, "sample record", e))
}

async fn append_revision(
    tx: &mut sqlx::Transaction<'_, Sqlite>,
    rec: &SampleRecord,
    snapshot: i64,
    author: Option<&str>,
    action: Action,
) -> Result<(), StoreError> {
    sqlx::query(
        "INSERT INTO sample_revisions (sample_id, revision, recorded_at, author, action, record, snapshot)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)",
    )
    .bind(&rec.id)
    .bind(rec.revision)
    .bind(&rec.updated_at)
    .bind(author)
    .bind(action.as_str())
    .bind(revision_body(&rec.head())?)
    .bind(snapshot)
    .execute(&mut **tx)
    .await
    .context("appending a revision")?;
    Ok(())
}

/// Stores a snapshot; its id.
async fn put_snapshot(
    tx: &mut sqlx::Transaction<'_, Sqlite>,
    p: &Packed,
) -> Result<i64, StoreError> {
    sqlx::query_scalar("INSERT INTO snapshots (base_version, body) VALUES (?1, ?2) RETURNING id")
        .bind(&p.base_version)
        .bind(&p.body)
        .fetch_one(&mut **tx)
        .await
        .context("storing an identification snapshot")
}

/// The record with this id and the id of its snapshot.
async fn fetch_in(
    tx: &mut sqlx::Transaction<'_, Sqlite>,
    id: &str,
) -> Result<Option<(i64, SampleRecord)>, StoreError> {
    let row: Option<Row> = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {COLUMNS}, {IDENTIFICATION} FROM samples WHERE id = ?1"
    )))
    .bind(id)
    .fetch_optional(&mut **tx)
    .await
    .context("reading a sample")?;
    row.map(|r| {
        let snapshot = r.snapshot_id()?;
        r.into_record().map(|(_, rec)| (snapshot, rec))
    })
    .transpose()
}

/// Values a new or updated record is written with.
pub struct NewState<'a> {
    /// The validated fields.
    pub sample: &'a ValidSample,
    /// The identification snapshot.
    pub identification: &'a Identification,
    /// Who makes the change.
    pub author: Option<&'a str>,
}

/// Creates a record (revision 1). `keep` carries an id and timestamps to
/// preserve (a CSV round trip); otherwise they are new.
#[tracing::instrument(skip(pool, s, keep), fields(sample.code = %s.sample.sample_code))]
pub async fn create(
    pool: &SqlitePool,
    s: NewState<'_>,
    keep: Option<&Kept>,
) -> Result<SampleRecord, WriteError> {
    let mut tx = super::write_tx(pool).await?;
    let rec = insert_in(&mut tx, &s, keep, Action::Create).await?;
    tx.commit().await.context("committing a new sample")?;
    tracing::info!(sample.id = %rec.id, "sample created");
    Ok(rec)
}

/// An id, timestamps and revision number carried over from an export.
#[derive(Clone, Debug, Default)]
pub struct Kept {
    /// Revision number (an exported record keeps its count).
    pub revision: Option<i64>,
    /// UUID.
    pub id: Option<String>,
    /// Created.
    pub created_at: Option<String>,
    /// Updated.
    pub updated_at: Option<String>,
}

/// A new live record of these fields; `times` is (created, updated,
/// revision).
fn fresh<I>(
    id: String,
    v: &ValidSample,
    times: (String, String, i64),
    identification: I,
    base_version: &str,
) -> SampleRecord<I> {
    let (created_at, updated_at, revision) = times;
    SampleRecord {
        id,
        project: v.project.clone(),
        sample_code: v.sample_code.clone(),
        collected_on: v.collected_on.clone(),
        collector: v.collector.clone(),
        station: v.station.clone(),
        latitude: v.latitude,
        longitude: v.longitude,
        coordinate_uncertainty_m: v.coordinate_uncertainty_m,
        setting: v.setting,
        lithology: v.lithology.clone(),
        observations: v.observations.clone(),
        field_id: v.field_id.clone(),
        notes: v.notes.clone(),
        created_at,
        updated_at,
        revision,
        identification,
        base_version: base_version.to_string(),
        deleted: false,
        deleted_at: None,
    }
}

/// Inserts one record and its first revision inside `tx`.
pub async fn insert_in(
    tx: &mut sqlx::Transaction<'_, Sqlite>,
    s: &NewState<'_>,
    keep: Option<&Kept>,
    action: Action,
) -> Result<SampleRecord, WriteError> {
    let v = s.sample;
    let id = keep
        .and_then(|k| k.id.clone())
        .unwrap_or_else(|| uuid::Uuid::new_v4().to_string());
    let obs = serde_json::to_string(&v.observations)
        .map_err(|e| WriteError::Store(corrupt(&id, "observations", e)))?;
    let snapshot = put_snapshot(tx, &Packed::of(s.identification)).await?;
    let created = keep.and_then(|k| k.created_at.clone());
    let updated = keep
        .and_then(|k| k.updated_at.clone())
        .or_else(|| created.clone());
    let sql = format!(
        "INSERT INTO samples (id, project, sample_code, revision, created_at, updated_at, collected_on, collector,
            station, latitude, longitude, coordinate_uncertainty_m, setting, lithology, observations, field_id,
            notes, snapshot, base_version)
         VALUES (?1, ?2, ?3, COALESCE(?19, 1), COALESCE(?4, {NOW}), COALESCE(?5, ?4, {NOW}), ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14,
            ?15, ?16, ?17, ?18)
         RETURNING revision, created_at, updated_at"
    );
    // Only what the database decides comes back; the rest of the record is
    // what was just written (no second decompress and parse of the snapshot).
    let (revision, created_at, updated_at): (i64, String, String) =
        sqlx::query_as(sqlx::AssertSqlSafe(sql))
            .bind(&id)
            .bind(&v.project)
            .bind(&v.sample_code)
            .bind(created)
            .bind(updated)
            .bind(&v.collected_on)
            .bind(&v.collector)
            .bind(&v.station)
            .bind(v.latitude)
            .bind(v.longitude)
            .bind(v.coordinate_uncertainty_m)
            .bind(v.setting.map(|x| x.to_string()))
            .bind(&v.lithology)
            .bind(obs)
            .bind(&v.field_id)
            .bind(&v.notes)
            .bind(snapshot)
            .bind(&s.identification.base_version)
            .bind(keep.and_then(|k| k.revision))
            .fetch_one(&mut **tx)
            .await
            .map_err(|e| classify(e, v))?;
    let rec = fresh(
        id,
        v,
        (created_at, updated_at, revision),
        s.identification.clone(),
        &s.identification.base_version,
    );
    append_revision(tx, &rec, snapshot, s.author, action).await?;
    Ok(rec)
}

/// One record of an import, validated.
pub struct ImportItem {
    /// The fields.
    pub sample: ValidSample,
    /// Its identification snapshot (kept from the file, or computed),
    /// ready to store.
    pub snapshot: Packed,
    /// Id, timestamps and revision from the file.
    pub keep: Kept,
}

/// Rows written per statement by [`import_all`] (about 1,900 bound values
/// for the samples, well under SQLite's limit of 32,766).
const IMPORT_BATCH: usize = 100;

/// Writes every item in one transaction: all of them, or (on any error)
/// none. `progress` is told the count written after each batch.
///
/// An import is the bulk path: rows go in a hundred at a time in
/// multi-row statements, snapshot ids are handed out in the transaction
/// (it holds the write lock, so none can be taken meanwhile), and rows
/// that carry no times of their own are stamped with the import's one
/// time. Each record still gets its snapshot and its first revision,
/// exactly as a single create would write them.
#[tracing::instrument(skip(pool, items, progress), fields(rows = items.len()))]
pub async fn import_all(
    pool: &SqlitePool,
    items: &[ImportItem],
    author: Option<&str>,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<usize, WriteError> {
    // A bulk write touches far more pages than SQLite's default cache of
    // 2 MB holds; with a small cache it spills dirty pages into the WAL in
    // the middle of the transaction and reads them back from there. So the
    // import runs on a connection of its own with a larger cache, set back
    // before the connection returns to the pool.
    let mut conn = pool.acquire().await.context("taking a connection")?;
    sqlx::query(sqlx::AssertSqlSafe(format!(
        "PRAGMA cache_size = -{IMPORT_CACHE_KIB}"
    )))
    .execute(&mut *conn)
    .await
    .context("sizing the cache for an import")?;
    let outcome = async {
        // The same BEGIN IMMEDIATE as `write_tx`, on this connection.
        let mut tx = sqlx::Connection::begin_with(&mut *conn, "BEGIN IMMEDIATE")
            .await
            .context("starting a write transaction")?;
        let n = import_batches(&mut tx, items, author, progress).await?;
        tx.commit().await.context("committing the import")?;
        Ok::<usize, WriteError>(n)
    }
    .await;
    let reset = sqlx::query(sqlx::AssertSqlSafe(format!(
        "PRAGMA cache_size = {SQLITE_DEFAULT_CACHE}"
    )))
    .execute(&mut *conn)
    .await;
    if reset.is_err() {
        // Never hand a connection with a 256 MB cache back to the pool.
        conn.detach();
    }
    outcome
}

/// The page cache asked for by an import, KiB.
const IMPORT_CACHE_KIB: i64 = 256 * 1024;

/// SQLite's default `cache_size` (2,000 KiB).
const SQLITE_DEFAULT_CACHE: i64 = -2000;

async fn import_batches(
    tx: &mut sqlx::Transaction<'_, Sqlite>,
    items: &[ImportItem],
    author: Option<&str>,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<usize, WriteError> {
    let (now, last_snapshot): (String, i64) = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {NOW}, COALESCE((SELECT MAX(id) FROM snapshots), 0)"
    )))
    .fetch_one(&mut **tx)
    .await
    .context("starting an import")?;
    let mut next_snapshot = last_snapshot + 1;
    let mut written = 0u64;
    for chunk in items.chunks(IMPORT_BATCH) {
        struct Prepared<'a> {
            item: &'a ImportItem,
            id: String,
            snapshot: i64,
            head: SampleRecord<()>,
            observations: String,
        }
        let mut batch = Vec::with_capacity(chunk.len());
        for it in chunk {
            let v = &it.sample;
            let id = it
                .keep
                .id
                .clone()
                .unwrap_or_else(|| uuid::Uuid::new_v4().to_string());
            let created_at = it.keep.created_at.clone().unwrap_or_else(|| now.clone());
            let updated_at = it
                .keep
                .updated_at
                .clone()
                .unwrap_or_else(|| created_at.clone());
            let observations = serde_json::to_string(&v.observations)
                .map_err(|e| WriteError::Store(corrupt(&id, "observations", e)))?;
            let head = fresh(
                id.clone(),
                v,
                (created_at, updated_at, it.keep.revision.unwrap_or(1)),
                (),
                &it.snapshot.base_version,
            );
            batch.push(Prepared {
                item: it,
                id,
                snapshot: next_snapshot,
                head,
                observations,
            });
            next_snapshot += 1;
        }
        let mut qb: QueryBuilder<Sqlite> =
            QueryBuilder::new("INSERT INTO snapshots (id, base_version, body) ");
        qb.push_values(&batch, |mut b, p| {
            b.push_bind(p.snapshot)
                .push_bind(&p.item.snapshot.base_version)
                .push_bind(&p.item.snapshot.body);
        });
        qb.build()
            .execute(&mut **tx)
            .await
            .context("storing imported snapshots")?;
        let mut qb: QueryBuilder<Sqlite> = QueryBuilder::new(
            "INSERT INTO samples (id, project, sample_code, revision, created_at, updated_at, collected_on, \
             collector, station, latitude, longitude, coordinate_uncertainty_m, setting, lithology, observations, \
             field_id, notes, snapshot, base_version) ",
        );
        qb.push_values(&batch, |mut b, p| {
            let h = &p.head;
            b.push_bind(&p.id)
                .push_bind(&h.project)
                .push_bind(&h.sample_code)
                .push_bind(h.revision)
                .push_bind(&h.created_at)
                .push_bind(&h.updated_at)
                .push_bind(&h.collected_on)
                .push_bind(&h.collector)
                .push_bind(&h.station)
                .push_bind(h.latitude)
                .push_bind(h.longitude)
                .push_bind(h.coordinate_uncertainty_m)
                .push_bind(h.setting.map(|x| x.to_string()))
                .push_bind(&h.lithology)
                .push_bind(&p.observations)
                .push_bind(&h.field_id)
                .push_bind(&h.notes)
                .push_bind(p.snapshot)
                .push_bind(&h.base_version);
        });
        qb.build().execute(&mut **tx).await.map_err(|e| {
            if e.as_database_error()
                .is_some_and(|d| d.kind() == sqlx::error::ErrorKind::UniqueViolation)
            {
                WriteError::ImportConflict
            } else {
                WriteError::Store(StoreError::Sqlx {
                    context: "writing imported samples",
                    source: e,
                })
            }
        })?;
        let mut bodies = Vec::with_capacity(batch.len());
        for p in &batch {
            bodies.push(revision_body(&p.head)?);
        }
        let mut qb: QueryBuilder<Sqlite> = QueryBuilder::new(
            "INSERT INTO sample_revisions (sample_id, revision, recorded_at, author, action, record, snapshot) ",
        );
        qb.push_values(batch.iter().zip(&bodies), |mut b, (p, body)| {
            b.push_bind(&p.id)
                .push_bind(p.head.revision)
                .push_bind(&p.head.updated_at)
                .push_bind(author)
                .push_bind(Action::Import.as_str())
                .push_bind(body)
                .push_bind(p.snapshot);
        });
        qb.build()
            .execute(&mut **tx)
            .await
            .context("appending imported revisions")?;
        written += batch.len() as u64;
        progress(written);
    }
    Ok(items.len())
}

/// Which of these ids are already in the log (tombstoned or not).
#[tracing::instrument(skip(pool, ids), fields(ids = ids.len()))]
pub async fn ids_present(pool: &SqlitePool, ids: &[&str]) -> Result<Vec<String>, StoreError> {
    let mut out = Vec::new();
    for chunk in ids.chunks(500) {
        let mut qb: QueryBuilder<Sqlite> =
            QueryBuilder::new("SELECT id FROM samples WHERE id IN (");
        let mut sep = qb.separated(", ");
        for id in chunk {
            sep.push_bind(*id);
        }
        qb.push(")");
        let found: Vec<String> = qb
            .build_query_scalar()
            .fetch_all(pool)
            .await
            .context("looking up sample ids")?;
        out.extend(found);
    }
    Ok(out)
}

/// Sample codes already used in a project.
#[tracing::instrument(skip(pool))]
pub async fn codes_in(pool: &SqlitePool, project: &str) -> Result<Vec<String>, StoreError> {
    sqlx::query_scalar("SELECT sample_code FROM samples WHERE project = ?1")
        .bind(project)
        .fetch_all(pool)
        .await
        .context("reading sample codes")
}

/// The record with this id, tombstoned or not.
#[tracing::instrument(skip(pool))]
pub async fn get(pool: &SqlitePool, id: &str) -> Result<Option<SampleRecord>, StoreError> {
    let row: Option<Row> = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {COLUMNS}, {IDENTIFICATION} FROM samples WHERE id = ?1"
    )))
    .bind(id)
    .fetch_optional(pool)
    .await
    .context("reading a sample")?;
    row.map(|r| r.into_record().map(|(_, rec)| rec)).transpose()
}

/// Replaces a live record with a new state when `expected_revision` is
/// the current one (optimistic concurrency); appends the revision.
#[tracing::instrument(skip(pool, s))]
pub async fn update(
    pool: &SqlitePool,
    id: &str,
    expected_revision: i64,
    s: NewState<'_>,
) -> Result<SampleRecord, WriteError> {
    let mut tx = super::write_tx(pool).await?;
    let (current_snapshot, current) = fetch_in(&mut tx, id)
        .await?
        .ok_or_else(|| WriteError::NotFound(id.to_string()))?;
    if current.deleted {
        return Err(WriteError::Deleted(id.to_string()));
    }
    if current.revision != expected_revision {
        return Err(WriteError::Stale {
            expected: expected_revision,
            current: Box::new(current),
        });
    }
    let v = s.sample;
    let obs = serde_json::to_string(&v.observations)
        .map_err(|e| WriteError::Store(corrupt(id, "observations", e)))?;
    // An edit that leaves the conclusion as it was (the notes, the
    // station, a corrected date) keeps pointing at the same snapshot.
    let snapshot = if current.identification == *s.identification {
        current_snapshot
    } else {
        put_snapshot(&mut tx, &Packed::of(s.identification)).await?
    };
    let sql = format!(
        "UPDATE samples SET project = ?2, sample_code = ?3, revision = revision + 1, updated_at = {NOW},
            collected_on = ?4, collector = ?5, station = ?6, latitude = ?7, longitude = ?8,
            coordinate_uncertainty_m = ?9, setting = ?10, lithology = ?11, observations = ?12, field_id = ?13,
            notes = ?14, snapshot = ?15, base_version = ?16
         WHERE id = ?1 AND revision = ?17
         RETURNING {COLUMNS}, {IDENTIFICATION}"
    );
    let row: Option<Row> = sqlx::query_as(sqlx::AssertSqlSafe(sql))
        .bind(id)
        .bind(&v.project)
        .bind(&v.sample_code)
        .bind(&v.collected_on)
        .bind(&v.collector)
        .bind(&v.station)
        .bind(v.latitude)
        .bind(v.longitude)
        .bind(v.coordinate_uncertainty_m)
        .bind(v.setting.map(|x| x.to_string()))
        .bind(&v.lithology)
        .bind(obs)
        .bind(&v.field_id)
        .bind(&v.notes)
        .bind(snapshot)
        .bind(&s.identification.base_version)
        .bind(expected_revision)
        .fetch_optional(&mut *tx)
        .await
        .map_err(|e| classify(e, v))?;
    let Some(row) = row else {
        // Another writer got in between the read and the write.
        let (_, now) = fetch_in(&mut tx, id)
            .await?
            .ok_or_else(|| WriteError::NotFound(id.to_string()))?;
        return Err(WriteError::Stale {
            expected: expected_revision,
            current: Box::new(now),
        });
    };
    let (_, rec) = row.into_record()?;
    append_revision(&mut tx, &rec, snapshot, s.author, Action::Update).await?;
    tx.commit().await.context("committing an update")?;
    tracing::info!(sample.id = %id, sample.revision = rec.revision, "sample updated");
    Ok(rec)
}

async fn set_tombstone(
    pool: &SqlitePool,
    id: &str,
    author: Option<&str>,
    delete: bool,
) -> Result<SampleRecord, WriteError> {
    let mut tx = super::write_tx(pool).await?;
    let (_, current) = fetch_in(&mut tx, id)
        .await?
        .ok_or_else(|| WriteError::NotFound(id.to_string()))?;
    if current.deleted == delete {
        // Already in the asked-for state: nothing to change, nothing to append.
        return Ok(current);
    }
    let sql = if delete {
        format!(
            "UPDATE samples SET deleted_at = {NOW}, updated_at = {NOW}, revision = revision + 1 WHERE id = ?1 RETURNING {COLUMNS}, {IDENTIFICATION}"
        )
    } else {
        format!(
            "UPDATE samples SET deleted_at = NULL, updated_at = {NOW}, revision = revision + 1 WHERE id = ?1 RETURNING {COLUMNS}, {IDENTIFICATION}"
        )
    };
    let row: Row = sqlx::query_as(sqlx::AssertSqlSafe(sql))
        .bind(id)
        .fetch_one(&mut *tx)
        .await
        .context("setting a tombstone")?;
    let snapshot = row.snapshot_id()?;
    let (_, rec) = row.into_record()?;
    append_revision(
        &mut tx,
        &rec,
        snapshot,
        author,
        if delete {
            Action::Delete
        } else {
            Action::Restore
        },
    )
    .await?;
    tx.commit().await.context("committing a tombstone")?;
    Ok(rec)
}

/// Tombstones a record (restorable; nothing is erased).
#[tracing::instrument(skip(pool))]
pub async fn delete(
    pool: &SqlitePool,
    id: &str,
    author: Option<&str>,
) -> Result<SampleRecord, WriteError> {
    set_tombstone(pool, id, author, true).await
}

/// Brings a tombstoned record back.
#[tracing::instrument(skip(pool))]
pub async fn restore(
    pool: &SqlitePool,
    id: &str,
    author: Option<&str>,
) -> Result<SampleRecord, WriteError> {
    set_tombstone(pool, id, author, false).await
}

#[derive(sqlx::FromRow)]
struct RevisionRow {
    revision: i64,
    recorded_at: String,
    author: Option<String>,
    action: String,
    record: Vec<u8>,
    snapshot: Option<i64>,
    body: Option<Vec<u8>>,
}

/// The whole record of a revision row: its document, with the
/// identification from its snapshot (revisions written before snapshots
/// were stored apart hold it inside the document).
fn revision_record(
    id: &str,
    r: &RevisionRow,
    read: &mut std::collections::HashMap<i64, Identification>,
) -> Result<SampleRecord, StoreError> {
    let doc = unpack(id, "revision record", &r.record)?;
    let Some(snapshot) = r.snapshot else {
        return serde_json::from_str(&doc).map_err(|e| corrupt(id, "revision record", e));
    };
    let head: SampleRecord<()> =
        serde_json::from_str(&doc).map_err(|e| corrupt(id, "revision record", e))?;
    let identification = match read.get(&snapshot) {
        Some(i) => i.clone(),
        None => {
            let body = r
                .body
                .as_deref()
                .ok_or_else(|| corrupt(id, "revision snapshot", "the snapshot is missing"))?;
            let i: Identification = serde_json::from_str(&unpack(id, "revision snapshot", body)?)
                .map_err(|e| corrupt(id, "revision snapshot", e))?;
            read.insert(snapshot, i.clone());
            i
        }
    };
    Ok(head.with_identification(identification))
}

/// Every state of a record, oldest first (the current one last).
#[tracing::instrument(skip(pool))]
pub async fn revisions(pool: &SqlitePool, id: &str) -> Result<Vec<Revision>, StoreError> {
    let rows: Vec<RevisionRow> = sqlx::query_as(
        "SELECT r.revision, r.recorded_at, r.author, r.action, r.record, r.snapshot, s.body
         FROM sample_revisions r LEFT JOIN snapshots s ON s.id = r.snapshot
         WHERE r.sample_id = ?1 ORDER BY r.revision",
    )
    .bind(id)
    .fetch_all(pool)
    .await
    .context("reading revisions")?;
    // Revisions that kept their snapshot share it: read each one once.
    let mut read: std::collections::HashMap<i64, Identification> = std::collections::HashMap::new();
    rows.into_iter()
        .map(|r| {
            let action = match r.action.as_str() {
                "create" => Action::Create,
                "update" => Action::Update,
                "delete" => Action::Delete,
                "restore" => Action::Restore,
                "import" => Action::Import,
                other => return Err(corrupt(id, "revision action", other)),
            };
            let record = revision_record(id, &r, &mut read)?;
            Ok(Revision {
                revision: r.revision,
                recorded_at: r.recorded_at,
                author: r.author,
                action,
                record,
            })
        })
        .collect()
}

/// Filters of the history page, the list API and the exports.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Filter {
    /// Project code.
    pub project: Option<String>,
    /// Field identification (entry id); `none` for not identified.
    pub field_id: Option<String>,
    /// Collector, exact.
    pub collector: Option<String>,
    /// Setting.
    pub setting: Option<Setting>,
    /// Collected on or after (ISO date).
    pub from: Option<String>,
    /// Collected on or before (ISO date).
    pub to: Option<String>,
    /// Free text over station, lithology and notes.
    pub q: Option<String>,
}

/// The stored identification JSON, passed through untouched (a list
/// response sends it on without reading it into the engine's types and
/// writing it out again, which was most of the cost of a page).
pub type Raw = Box<serde_json::value::RawValue>;

/// The leading candidate of a stored identification, read without the
/// rest of the document (the history page shows only this).
#[derive(Clone, Debug, PartialEq, Deserialize)]
pub struct Lead {
    /// Entry id.
    pub id: String,
    /// Entry name.
    pub name: String,
    /// Its probability.
    pub probability: f64,
}

/// What a summary reads of a stored identification: the first candidate,
/// when there is one. The other candidates are skipped, not built.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Leader(pub Option<Lead>);

impl<'de> Deserialize<'de> for Leader {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct First(Option<Lead>);
        impl<'de> Deserialize<'de> for First {
            fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
                struct V;
                impl<'de> serde::de::Visitor<'de> for V {
                    type Value = First;
                    fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                        f.write_str("a list of candidates")
                    }
                    fn visit_seq<A: serde::de::SeqAccess<'de>>(
                        self,
                        mut seq: A,
                    ) -> Result<First, A::Error> {
                        let first = seq.next_element::<Lead>()?;
                        while seq.next_element::<serde::de::IgnoredAny>()?.is_some() {}
                        Ok(First(first))
                    }
                }
                d.deserialize_seq(V)
            }
        }
        #[derive(Deserialize)]
        struct Doc {
            candidates: First,
        }
        Doc::deserialize(d).map(|doc| Leader(doc.candidates.0))
    }
}

/// A page of records, newest first.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Page<I = Identification> {
    /// The records.
    pub samples: Vec<SampleRecord<I>>,
    /// Cursor of the following page, if any.
    pub next_cursor: Option<String>,
}

/// Turns free text into an FTS5 query that cannot be a syntax error: every
/// word becomes a quoted term, all of them required. Words match whole
/// (case and accents aside); a word typed with a trailing `*` matches every
/// word it begins. Whole words are the default because a prefix term over a
/// common word costs FTS5 a merge of its whole posting list (about 30 ms at
/// a million samples, against 0.2 ms for the whole word).
pub fn fts_query(q: &str) -> Option<String> {
    let terms: Vec<String> = q
        .split_whitespace()
        .filter_map(|w| {
            let prefix = w.ends_with('*');
            let word: String = w
                .chars()
                .filter(|c| c.is_alphanumeric() || *c == '-' || *c == '_' || *c == '.')
                .collect();
            (!word.is_empty()).then(|| {
                let quoted = format!("\"{}\"", word.replace('"', "\"\""));
                if prefix { format!("{quoted}*") } else { quoted }
            })
        })
        .collect();
    (!terms.is_empty()).then(|| terms.join(" "))
}

fn push_filters(qb: &mut QueryBuilder<Sqlite>, f: &Filter) {
    qb.push(" WHERE deleted_at IS NULL");
    if let Some(p) = &f.project {
        qb.push(" AND project = ").push_bind(p.clone());
    }
    match f.field_id.as_deref() {
        Some("none") => {
            qb.push(" AND field_id IS NULL");
        }
        Some(id) => {
            qb.push(" AND field_id = ").push_bind(id.to_string());
        }
        None => {}
    }
    if let Some(c) = &f.collector {
        qb.push(" AND collector = ").push_bind(c.clone());
    }
    if let Some(s) = f.setting {
        qb.push(" AND setting = ").push_bind(s.to_string());
    }
    // `+collected_on` keeps the planner off the date index: walking the
    // log newest first and stopping after a page is cheaper for the broad
    // ranges a crew asks for (a field season) than collecting and sorting
    // every sample of the range on every page.
    if let Some(d) = &f.from {
        qb.push(" AND +collected_on >= ").push_bind(d.clone());
    }
    if let Some(d) = &f.to {
        qb.push(" AND +collected_on <= ").push_bind(d.clone());
    }
    if let Some(q) = f.q.as_deref().and_then(fts_query) {
        // The search drives the query (see `list`), newest match first.
        qb.push(" AND samples_fts MATCH ").push_bind(q);
    }
}

/// Records matching `f`, newest first, `limit` at a time; `cursor` is the
/// `next_cursor` of the page before (keyset pagination: no OFFSET, so
/// every page costs the same however deep).
#[tracing::instrument(skip(pool))]
pub async fn list(
    pool: &SqlitePool,
    f: &Filter,
    limit: i64,
    cursor: Option<i64>,
) -> Result<Page, StoreError> {
    list_as(pool, f, limit, cursor).await
}

/// [`list`], with each identification read as `I` ([`Raw`] for a
/// response that passes it on, [`Leader`] for a summary).
pub async fn list_as<I: serde::de::DeserializeOwned>(
    pool: &SqlitePool,
    f: &Filter,
    limit: i64,
    cursor: Option<i64>,
) -> Result<Page<I>, StoreError> {
    // With free text, the full-text index is walked newest first and
    // joined to the records (CROSS JOIN makes SQLite keep it the outer
    // loop rather than probing it once per row of another index), so a page stops after `limit` matches instead
    // of collecting every match first. The select list is qualified because
    // the index has station, lithology and notes columns of its own.
    let (from, key) = if f.q.as_deref().and_then(fts_query).is_some() {
        (
            "FROM samples_fts CROSS JOIN samples ON samples.seq = samples_fts.rowid",
            "samples_fts.rowid",
        )
    } else {
        ("FROM samples", "samples.seq")
    };
    let cols: String = COLUMNS
        .split(", ")
        .map(|c| format!("samples.{}", c.trim()))
        .collect::<Vec<_>>()
        .join(", ");
    let mut qb: QueryBuilder<Sqlite> =
        QueryBuilder::new(format!("SELECT {cols}, {IDENTIFICATION} {from}"));
    push_filters(&mut qb, f);
    if let Some(c) = cursor {
        qb.push(format!(" AND {key} < ")).push_bind(c);
    }
    qb.push(format!(" ORDER BY {key} DESC LIMIT "))
        .push_bind(limit + 1);
    let rows: Vec<Row> = qb
        .build_query_as()
        .fetch_all(pool)
        .await
        .context("listing samples")?;
    let mut out = Vec::with_capacity(rows.len());
    let mut last_seq = None;
    for r in rows.into_iter().take(limit as usize + 1) {
        let (seq, rec) = r.into_record_as()?;
        out.push((seq, rec));
    }
    let more = out.len() as i64 > limit;
    if more {
        out.truncate(limit as usize);
        last_seq = out.last().map(|(s, _)| *s);
    }
    Ok(Page {
        samples: out.into_iter().map(|(_, r)| r).collect(),
        next_cursor: last_seq.map(|s| s.to_string()),
    })
}

/// A project.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, sqlx::FromRow, utoipa::ToSchema)]
pub struct Project {
    /// Short code.
    pub code: String,
    /// Name.
    pub name: String,
    /// Sample-code pattern.
    pub code_scheme: String,
    /// Created.
    pub created_at: String,
    /// When the name or scheme was last edited (null until then).
    pub updated_at: Option<String>,
}

/// The columns of [`Project`].
const PROJECT_COLUMNS: &str = "code, name, code_scheme, created_at, updated_at";

/// Every project, by code.
#[tracing::instrument(skip(pool))]
pub async fn projects(pool: &SqlitePool) -> Result<Vec<Project>, StoreError> {
    sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {PROJECT_COLUMNS} FROM projects ORDER BY code"
    )))
    .fetch_all(pool)
    .await
    .context("listing projects")
}

/// One project.
#[tracing::instrument(skip(pool))]
pub async fn project(pool: &SqlitePool, code: &str) -> Result<Option<Project>, StoreError> {
    sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {PROJECT_COLUMNS} FROM projects WHERE code = ?1"
    )))
    .bind(code)
    .fetch_optional(pool)
    .await
    .context("reading a project")
}

/// A project's earlier name and scheme, kept by [`update_project`].
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, sqlx::FromRow)]
pub struct ProjectChange {
    /// The name before the edit.
    pub name: String,
    /// The scheme before the edit.
    pub code_scheme: String,
    /// When the edit was made.
    pub changed_at: String,
}

/// Renames a project and sets its code scheme (the values already
/// checked). The earlier name and scheme are kept in `project_changes`
/// and `updated_at` is set; an edit that changes nothing writes nothing.
/// `None` when there is no such project. Sample codes are not touched.
#[tracing::instrument(skip(pool))]
pub async fn update_project(
    pool: &SqlitePool,
    code: &str,
    name: &str,
    scheme: &str,
) -> Result<Option<Project>, StoreError> {
    let mut tx = pool.begin().await.context("starting a project edit")?;
    let current: Option<Project> = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {PROJECT_COLUMNS} FROM projects WHERE code = ?1"
    )))
    .bind(code)
    .fetch_optional(&mut *tx)
    .await
    .context("reading a project")?;
    let Some(current) = current else {
        return Ok(None);
    };
    if current.name == name && current.code_scheme == scheme {
        return Ok(Some(current));
    }
    sqlx::query(sqlx::AssertSqlSafe(format!(
        "INSERT INTO project_changes (code, name, code_scheme, changed_at) VALUES (?1, ?2, ?3, {NOW})"
    )))
    .bind(code)
    .bind(&current.name)
    .bind(&current.code_scheme)
    .execute(&mut *tx)
    .await
    .context("keeping a project's earlier state")?;
    let updated: Project = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "UPDATE projects SET name = ?2, code_scheme = ?3, updated_at = {NOW} WHERE code = ?1
         RETURNING {PROJECT_COLUMNS}"
    )))
    .bind(code)
    .bind(name)
    .bind(scheme)
    .fetch_one(&mut *tx)
    .await
    .context("editing a project")?;
    tx.commit().await.context("committing a project edit")?;
    Ok(Some(updated))
}

/// A project's earlier names and schemes, oldest first.
#[tracing::instrument(skip(pool))]
pub async fn project_changes(
    pool: &SqlitePool,
    code: &str,
) -> Result<Vec<ProjectChange>, StoreError> {
    sqlx::query_as(
        "SELECT name, code_scheme, changed_at FROM project_changes WHERE code = ?1 ORDER BY id",
    )
    .bind(code)
    .fetch_all(pool)
    .await
    .context("reading a project's earlier states")
}

/// Creates a project; false when the code is taken.
#[tracing::instrument(skip(pool))]
pub async fn create_project(
    pool: &SqlitePool,
    code: &str,
    name: &str,
    scheme: &str,
) -> Result<bool, StoreError> {
    let r = sqlx::query(sqlx::AssertSqlSafe(format!(
        "INSERT INTO projects (code, name, code_scheme, created_at) VALUES (?1, ?2, ?3, {NOW})
         ON CONFLICT (code) DO NOTHING"
    )))
    .bind(code)
    .bind(name)
    .bind(scheme)
    .execute(pool)
    .await
    .context("creating a project")?;
    Ok(r.rows_affected() == 1)
}

/// Codes in a project that start with `prefix` (to find the next free
/// sequence number of a code scheme).
#[tracing::instrument(skip(pool))]
pub async fn codes_with_prefix(
    pool: &SqlitePool,
    project: &str,
    prefix: &str,
) -> Result<Vec<String>, StoreError> {
    let pattern = format!(
        "{}%",
        prefix
            .replace('\\', "\\\\")
            .replace('%', "\\%")
            .replace('_', "\\_")
    );
    sqlx::query_scalar(
        "SELECT sample_code FROM samples WHERE project = ?1 AND sample_code LIKE ?2 ESCAPE '\\'",
    )
    .bind(project)
    .bind(pattern)
    .fetch_all(pool)
    .await
    .context("reading sample codes")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::Engine;
    use crate::samples::SampleInput;

    async fn pool() -> (SqlitePool, tempfile::TempDir) {
        let dir = tempfile::tempdir().expect("tempdir");
        let pool = crate::store::open(&dir.path().join("s.sqlite"))
            .await
            .expect("open");
        (pool, dir)
    }

    fn valid(code: &str, notes: &str) -> ValidSample {
        SampleInput {
            sample_code: Some(code.into()),
            notes: Some(notes.into()),
            ..Default::default()
        }
        .validate(|_| true, None)
        .expect("valid")
    }

    async fn add(pool: &SqlitePool, code: &str, notes: &str) -> SampleRecord {
        let v = valid(code, notes);
        let ident = Engine::builtin().identify(&v.observations);
        create(
            pool,
            NewState {
                sample: &v,
                identification: &ident,
                author: Some("test"),
            },
            None,
        )
        .await
        .expect("create")
    }

    #[tokio::test]
    async fn a_taken_code_is_refused_and_the_first_record_is_kept() {
        let (pool, _d) = pool().await;
        let first = add(&pool, "BV-1", "first").await;
        let v = valid("BV-1", "second");
        let ident = Engine::builtin().identify(&v.observations);
        let err = create(
            &pool,
            NewState {
                sample: &v,
                identification: &ident,
                author: None,
            },
            None,
        )
        .await;
        assert!(matches!(err, Err(WriteError::CodeTaken { .. })), "{err:?}");
        assert_eq!(
            get(&pool, &first.id)
                .await
                .expect("get")
                .expect("kept")
                .notes
                .as_deref(),
            Some("first")
        );
    }

    #[tokio::test]
    async fn updates_append_revisions_and_stale_ones_are_refused() {
        let (pool, _d) = pool().await;
        let rec = add(&pool, "BV-2", "typo in the notse").await;
        let v = valid("BV-2", "typo in the notes");
        let ident = Engine::builtin().identify(&v.observations);
        let r2 = update(
            &pool,
            &rec.id,
            1,
            NewState {
                sample: &v,
                identification: &ident,
                author: Some("a"),
            },
        )
        .await
        .expect("update");
        assert_eq!(r2.revision, 2);
        let stale = update(
            &pool,
            &rec.id,
            1,
            NewState {
                sample: &v,
                identification: &ident,
                author: Some("b"),
            },
        )
        .await;
        match stale {
            Err(WriteError::Stale { current, .. }) => assert_eq!(current.revision, 2),
            other => panic!("expected stale, got {other:?}"),
        }
        let revs = revisions(&pool, &rec.id).await.expect("revisions");
        assert_eq!(revs.len(), 2);
        assert_eq!(revs[0].record.notes.as_deref(), Some("typo in the notse"));
        assert_eq!(revs[1].author.as_deref(), Some("a"));
    }

    #[tokio::test]
    async fn delete_is_a_restorable_tombstone() {
        let (pool, _d) = pool().await;
        let rec = add(&pool, "BV-3", "x").await;
        let del = delete(&pool, &rec.id, None).await.expect("delete");
        assert!(del.deleted);
        assert_eq!(del.revision, 2);
        let page = list(&pool, &Filter::default(), 10, None)
            .await
            .expect("list");
        assert!(page.samples.is_empty());
        let back = restore(&pool, &rec.id, None).await.expect("restore");
        assert!(!back.deleted);
        assert_eq!(back.revision, 3);
        assert_eq!(revisions(&pool, &rec.id).await.expect("revs").len(), 3);
    }

    #[tokio::test]
    async fn keyset_pages_cover_every_record_once_newest_first() {
        let (pool, _d) = pool().await;
        for i in 0..25 {
            add(
                &pool,
                &format!("K-{i:03}"),
                if i % 2 == 0 {
                    "biotite schist"
                } else {
                    "chlorite phyllite"
                },
            )
            .await;
        }
        let mut seen = Vec::new();
        let mut cursor = None;
        loop {
            let page = list(&pool, &Filter::default(), 10, cursor)
                .await
                .expect("page");
            seen.extend(page.samples.iter().map(|s| s.sample_code.clone()));
            match page.next_cursor {
                Some(c) => cursor = Some(c.parse().expect("cursor")),
                None => break,
            }
        }
        assert_eq!(seen.len(), 25);
        assert_eq!(seen[0], "K-024");
        assert_eq!(seen[24], "K-000");
        let f = Filter {
            q: Some("chlor*".into()),
            ..Default::default()
        };
        assert_eq!(
            list(&pool, &f, 100, None).await.expect("fts").samples.len(),
            12
        );
    }

    #[test]
    fn free_text_never_becomes_fts_syntax() {
        assert_eq!(
            fts_query("biotite  schist").as_deref(),
            Some("\"biotite\" \"schist\"")
        );
        assert_eq!(
            fts_query("chlor* phyllite").as_deref(),
            Some("\"chlor\"* \"phyllite\"")
        );
        // FTS5 operators and stray punctuation are only ever words.
        assert_eq!(
            fts_query("\"OR\" NEAR( *").as_deref(),
            Some("\"OR\" \"NEAR\"")
        );
        assert_eq!(fts_query("  ").as_deref(), None);
    }

    async fn snapshot_count(pool: &SqlitePool) -> i64 {
        sqlx::query_scalar("SELECT COUNT(*) FROM snapshots")
            .fetch_one(pool)
            .await
            .expect("count")
    }

    fn obs(json: &str) -> Observations {
        crate::engine::input::observations_from_json(json.as_bytes()).expect("observations")
    }

    #[tokio::test]
    async fn an_edit_that_keeps_the_conclusion_shares_its_snapshot() {
        let (pool, _d) = pool().await;
        let rec = add(&pool, "SN-1", "first").await;
        assert_eq!(snapshot_count(&pool).await, 1);
        // Notes only: same observations, same identification, no new snapshot.
        let v = valid("SN-1", "second");
        let same = Engine::builtin().identify(&v.observations);
        update(
            &pool,
            &rec.id,
            1,
            NewState {
                sample: &v,
                identification: &same,
                author: None,
            },
        )
        .await
        .expect("notes edit");
        delete(&pool, &rec.id, None).await.expect("delete");
        restore(&pool, &rec.id, None).await.expect("restore");
        assert_eq!(snapshot_count(&pool).await, 1);
        // New observations: a new conclusion, stored as a second snapshot;
        // the history keeps the first one with the first states.
        let mut v = valid("SN-1", "third");
        v.observations = obs(r#"{"luster":"metallic","streak":"red_brown"}"#);
        let other = Engine::builtin().identify(&v.observations);
        assert_ne!(other, same);
        let r5 = update(
            &pool,
            &rec.id,
            4,
            NewState {
                sample: &v,
                identification: &other,
                author: None,
            },
        )
        .await
        .expect("observations edit");
        assert_eq!(snapshot_count(&pool).await, 2);
        assert_eq!(r5.identification, other);
        let revs = revisions(&pool, &rec.id).await.expect("revisions");
        let idents: Vec<bool> = revs
            .iter()
            .map(|r| r.record.identification == same)
            .collect();
        assert_eq!(idents, vec![true, true, true, true, false]);
        assert_eq!(revs.last().map(|r| &r.record), Some(&r5));
        assert_eq!(get(&pool, &rec.id).await.expect("get"), Some(r5));
    }

    /// zlib of a JSON document, as the store wrote it before snapshots were
    /// stored apart (and still writes its documents).
    fn zlib(v: &impl Serialize) -> Vec<u8> {
        pack(&serde_json::to_string(v).expect("json"))
    }

    #[tokio::test]
    async fn records_written_before_snapshots_were_stored_apart_read_the_same_after_the_migration()
    {
        let dir = tempfile::tempdir().expect("tempdir");
        let opts = sqlx::sqlite::SqliteConnectOptions::new()
            .filename(dir.path().join("old.sqlite"))
            .create_if_missing(true)
            .foreign_keys(true);
        let pool = sqlx::sqlite::SqlitePoolOptions::new()
            .max_connections(1)
            .connect_with(opts)
            .await
            .expect("open");
        // The log as migration 3 left it: the snapshot inside the sample
        // row, and the whole record (snapshot included) in each revision.
        crate::store::MIGRATOR
            .run_to(3, &pool)
            .await
            .expect("migrate to 3");
        let observations =
            obs(r#"{"cleavage":"one_perfect","tenacity":"elastic","colour":["colourless"]}"#);
        let identification = Engine::builtin().identify(&observations);
        let old = SampleRecord {
            id: "9b2f1c52-6a4e-4d1b-9a39-0c1d2e3f4a5b".into(),
            project: "default".into(),
            sample_code: "OLD-1".into(),
            collected_on: Some("2026-06-30".into()),
            collector: Some("Crew A".into()),
            station: Some("Station 4".into()),
            latitude: Some(-41.25),
            longitude: Some(-20.5),
            coordinate_uncertainty_m: Some(15.0),
            setting: Some(Setting::Pegmatite),
            lithology: Some("coarse pegmatite".into()),
            observations: observations.clone(),
            field_id: Some("muscovite".into()),
            notes: Some("books to 4 cm".into()),
            created_at: "2026-07-01T08:00:00.000Z".into(),
            updated_at: "2026-07-02T09:00:00.000Z".into(),
            revision: 2,
            base_version: identification.base_version.clone(),
            identification: identification.clone(),
            deleted: false,
            deleted_at: None,
        };
        let mut first = old.clone();
        first.revision = 1;
        first.notes = Some("books to 4 cn".into());
        first.updated_at = old.created_at.clone();
        sqlx::query(
            "INSERT INTO samples (id, project, sample_code, revision, created_at, updated_at, collected_on,
                collector, station, latitude, longitude, coordinate_uncertainty_m, setting, lithology,
                observations, field_id, notes, identification, base_version)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18, ?19)",
        )
        .bind(&old.id)
        .bind(&old.project)
        .bind(&old.sample_code)
        .bind(old.revision)
        .bind(&old.created_at)
        .bind(&old.updated_at)
        .bind(&old.collected_on)
        .bind(&old.collector)
        .bind(&old.station)
        .bind(old.latitude)
        .bind(old.longitude)
        .bind(old.coordinate_uncertainty_m)
        .bind("pegmatite")
        .bind(&old.lithology)
        .bind(serde_json::to_string(&old.observations).expect("json"))
        .bind(&old.field_id)
        .bind(&old.notes)
        .bind(zlib(&old.identification))
        .bind(&old.base_version)
        .execute(&pool)
        .await
        .expect("old sample");
        for (r, action) in [(&first, "create"), (&old, "update")] {
            sqlx::query(
                "INSERT INTO sample_revisions (sample_id, revision, recorded_at, author, action, record)
                 VALUES (?1, ?2, ?3, 'crew', ?4, ?5)",
            )
            .bind(&r.id)
            .bind(r.revision)
            .bind(&r.updated_at)
            .bind(action)
            .bind(zlib(r))
            .execute(&pool)
            .await
            .expect("old revision");
        }
        crate::store::MIGRATOR.run(&pool).await.expect("migrate");

        assert_eq!(get(&pool, &old.id).await.expect("get").as_ref(), Some(&old));
        let revs = revisions(&pool, &old.id).await.expect("revisions");
        let records: Vec<&SampleRecord> = revs.iter().map(|r| &r.record).collect();
        assert_eq!(records, vec![&first, &old]);
        let page = list(&pool, &Filter::default(), 10, None)
            .await
            .expect("list");
        assert_eq!(page.samples, vec![old.clone()]);
        // The old live snapshot moved over; a notes edit after the
        // migration shares it, and the history mixes both kinds of revision.
        assert_eq!(snapshot_count(&pool).await, 1);
        let mut v = valid("OLD-1", "books to 5 cm");
        v.observations = observations;
        let r3 = update(
            &pool,
            &old.id,
            2,
            NewState {
                sample: &v,
                identification: &identification,
                author: Some("crew"),
            },
        )
        .await
        .expect("update after the migration");
        assert_eq!(snapshot_count(&pool).await, 1);
        let revs = revisions(&pool, &old.id).await.expect("revisions");
        assert_eq!(revs.len(), 3);
        assert_eq!(revs[2].record, r3);
        assert_eq!(revs[0].record, first);
    }

    fn item(code: &str, keep: Kept) -> ImportItem {
        let v = valid(code, "imported");
        let ident = Engine::builtin().identify(&v.observations);
        ImportItem {
            sample: v,
            snapshot: Packed::of(&ident),
            keep,
        }
    }

    #[tokio::test]
    async fn an_import_larger_than_a_batch_writes_every_record_with_its_first_revision() {
        let (pool, _d) = pool().await;
        let before = add(&pool, "PRE-1", "before the import").await;
        let n = IMPORT_BATCH * 2 + 7;
        let mut items: Vec<ImportItem> = (0..n)
            .map(|i| item(&format!("IM-{i:04}"), Kept::default()))
            .collect();
        items[3].keep = Kept {
            revision: Some(4),
            id: Some("0d5a3c1e-2b4f-4a6d-8e9f-1a2b3c4d5e6f".into()),
            created_at: Some("2025-08-01T10:00:00.000Z".into()),
            updated_at: Some("2025-08-03T11:30:00.000Z".into()),
        };
        let told = std::sync::Mutex::new(Vec::new());
        let written = import_all(&pool, &items, Some("importer"), &|k| {
            told.lock().expect("lock").push(k);
        })
        .await
        .expect("import");
        assert_eq!(written, n);
        assert_eq!(
            told.into_inner().expect("lock"),
            vec![IMPORT_BATCH as u64, 2 * IMPORT_BATCH as u64, n as u64]
        );
        assert_eq!(snapshot_count(&pool).await, n as i64 + 1);
        let page = list(&pool, &Filter::default(), 1000, None)
            .await
            .expect("list");
        assert_eq!(page.samples.len(), n + 1);
        // Newest first: the import's rows in reverse, then the earlier one.
        assert_eq!(page.samples[0].sample_code, format!("IM-{:04}", n - 1));
        assert_eq!(page.samples[n].id, before.id);
        for rec in &page.samples[..n] {
            let revs = revisions(&pool, &rec.id).await.expect("revisions");
            assert_eq!(revs.len(), 1);
            assert_eq!(revs[0].action, Action::Import);
            assert_eq!(revs[0].author.as_deref(), Some("importer"));
            assert_eq!(&revs[0].record, rec);
        }
        let kept = get(&pool, "0d5a3c1e-2b4f-4a6d-8e9f-1a2b3c4d5e6f")
            .await
            .expect("get")
            .expect("kept id");
        assert_eq!(
            (
                kept.revision,
                kept.created_at.as_str(),
                kept.updated_at.as_str()
            ),
            (4, "2025-08-01T10:00:00.000Z", "2025-08-03T11:30:00.000Z")
        );
        // The import's large page cache stays with the import: every
        // connection in the pool is back at SQLite's default.
        let mut held = Vec::new();
        for _ in 0..pool.size() {
            held.push(pool.acquire().await.expect("connection"));
        }
        for c in &mut held {
            let kib: i64 = sqlx::query_scalar("PRAGMA cache_size")
                .fetch_one(&mut **c)
                .await
                .expect("pragma");
            assert_eq!(kib, SQLITE_DEFAULT_CACHE);
        }
        drop(held);
        // Rows without times share the import's own time.
        let stamps: std::collections::HashSet<&str> = page.samples[..n]
            .iter()
            .filter(|r| r.id != kept.id)
            .map(|r| r.created_at.as_str())
            .collect();
        assert_eq!(stamps.len(), 1);
    }

    #[tokio::test]
    async fn a_clash_at_the_write_leaves_nothing_of_the_import() {
        let (pool, _d) = pool().await;
        let items: Vec<ImportItem> = (0..IMPORT_BATCH + 5)
            .map(|i| item(&format!("CL-{i:04}"), Kept::default()))
            .collect();
        // A code taken after the rows were checked (a second writer).
        add(&pool, "CL-0102", "got there first").await;
        let r = import_all(&pool, &items, None, &|_| {}).await;
        assert!(matches!(r, Err(WriteError::ImportConflict)), "{r:?}");
        let page = list(&pool, &Filter::default(), 1000, None)
            .await
            .expect("list");
        assert_eq!(page.samples.len(), 1);
        assert_eq!(snapshot_count(&pool).await, 1);
    }

    #[tokio::test]
    async fn the_light_reads_of_a_page_agree_with_the_full_one() {
        let (pool, _d) = pool().await;
        let mut v = valid("LR-1", "dark books");
        v.observations = obs(r#"{"cleavage":"one_perfect","colour":["black"]}"#);
        let ident = Engine::builtin().identify(&v.observations);
        create(
            &pool,
            NewState {
                sample: &v,
                identification: &ident,
                author: None,
            },
            None,
        )
        .await
        .expect("create");
        add(&pool, "LR-2", "nothing observed").await;
        let full = list(&pool, &Filter::default(), 10, None)
            .await
            .expect("full");
        let raw = list_as::<Raw>(&pool, &Filter::default(), 10, None)
            .await
            .expect("raw");
        let lead = list_as::<Leader>(&pool, &Filter::default(), 10, None)
            .await
            .expect("leader");
        assert_eq!(full.samples.len(), 2);
        for ((f, r), l) in full.samples.iter().zip(&raw.samples).zip(&lead.samples) {
            let back: Identification = serde_json::from_str(r.identification.get()).expect("raw");
            assert_eq!(back, f.identification);
            let first = &f.identification.candidates[0];
            assert_eq!(
                l.identification,
                Leader(Some(Lead {
                    id: first.id.to_string(),
                    name: first.name.to_string(),
                    probability: first.probability,
                }))
            );
            assert_eq!(l.clone().with_identification(()), f.head());
        }
        // The same JSON as the full record writes, field for field.
        assert_eq!(
            serde_json::to_value(&raw).expect("raw json"),
            serde_json::to_value(&full).expect("full json")
        );
        let none: Leader =
            serde_json::from_str(r#"{"candidates":[],"outside_base":1.0}"#).expect("empty");
        assert_eq!(none, Leader(None));
    }
}
