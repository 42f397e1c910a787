//! Questioning drafts: create, read, save, list, finish, discard, and the
//! removal of drafts in which nothing was observed.
//!
//! A draft is created only by a POST from the questioning form (never by
//! a page view), and one with nothing observed is neither listed nor kept:
//! [`remove_stale_empty`] deletes it a day after its last change. It runs
//! when the store opens and whenever a draft is started, so the table stays
//! bounded by what people actually recorded.

use std::time::{SystemTime, UNIX_EPOCH};

use serde::de::DeserializeOwned;
use sqlx::SqlitePool;

use super::{Context, StoreError};
use crate::engine::{Observations, Property};

/// An identification in progress.
#[derive(Clone, Debug, PartialEq)]
pub struct Draft {
    /// UUID, the draft's own URL segment.
    pub id: String,
    /// When it was started (ISO 8601 UTC).
    pub created_at: String,
    /// When it was last changed.
    pub updated_at: String,
    /// What has been observed so far.
    pub observations: Observations,
    /// Properties recorded as "not tested".
    pub skipped: Vec<Property>,
    /// When the flow reached its results, if it has.
    pub finished_at: Option<String>,
    /// The saved sample this draft re-examines, if any.
    pub for_sample: Option<String>,
    /// The sample this draft was saved into, if it was.
    pub saved_as: Option<String>,
}

#[derive(sqlx::FromRow)]
struct DraftRow {
    id: String,
    created_at: String,
    updated_at: String,
    observations: String,
    skipped: String,
    finished_at: Option<String>,
    for_sample: Option<String>,
    saved_as: Option<String>,
}

/// The columns every read selects, in [`DraftRow`]'s order.
const COLUMNS: &str =
    "id, created_at, updated_at, observations, skipped, finished_at, for_sample, saved_as";

fn decode<T: DeserializeOwned>(id: &str, what: &'static str, json: &str) -> Result<T, StoreError> {
    serde_json::from_str(json).map_err(|e| StoreError::Corrupt {
        what,
        id: id.to_string(),
        detail: e.to_string(),
    })
}

impl TryFrom<DraftRow> for Draft {
    type Error = StoreError;
    fn try_from(r: DraftRow) -> Result<Self, StoreError> {
        Ok(Draft {
            observations: decode(&r.id, "draft observations", &r.observations)?,
            skipped: decode(&r.id, "draft skipped list", &r.skipped)?,
            id: r.id,
            created_at: r.created_at,
            updated_at: r.updated_at,
            finished_at: r.finished_at,
            for_sample: r.for_sample,
            saved_as: r.saved_as,
        })
    }
}

const NOW: &str = "strftime('%Y-%m-%dT%H:%M:%fZ', 'now')";

/// How long a draft with nothing observed is kept after its last change
/// (an SQLite date modifier). A day covers a field day: a question page
/// left open over lunch and answered later still finds its draft, while
/// drafts that were opened and abandoned do not pile up. Removing them
/// loses nothing a person recorded.
pub const EMPTY_DRAFT_MAX_AGE: &str = "-1 day";

/// Starts a draft from its first answers (the questioning form's first
/// POST): `observations` recorded and `skipped` marked "not tested".
#[tracing::instrument(skip(pool, observations))]
pub async fn create(
    pool: &SqlitePool,
    observations: &Observations,
    skipped: &[Property],
) -> Result<Draft, StoreError> {
    start(pool, observations, skipped, None).await
}

/// Starts a draft that re-examines the saved sample `sample_id` from its
/// observations.
#[tracing::instrument(skip(pool, observations))]
pub async fn create_for_sample(
    pool: &SqlitePool,
    sample_id: &str,
    observations: &Observations,
) -> Result<Draft, StoreError> {
    start(pool, observations, &[], Some(sample_id)).await
}

fn answers(observations: &Observations) -> i64 {
    Property::ALL
        .iter()
        .filter(|p| p.is_observed(observations))
        .count() as i64
}

fn seconds(now: SystemTime) -> f64 {
    now.duration_since(UNIX_EPOCH)
        .map_or(0.0, |d| d.as_secs_f64())
}

/// Removes every draft with nothing observed whose last change is more
/// than [`EMPTY_DRAFT_MAX_AGE`] before `now` (discarded or not); returns how
/// many went. `now` is a parameter so that tests can set the clock.
#[tracing::instrument(skip(pool))]
pub async fn remove_stale_empty(pool: &SqlitePool, now: SystemTime) -> Result<u64, StoreError> {
    let mut tx = super::write_tx(pool).await?;
    let gone = prune(&mut tx, now).await?;
    tx.commit()
        .await
        .context("committing the removal of empty drafts")?;
    Ok(gone)
}

async fn prune(
    tx: &mut sqlx::Transaction<'_, sqlx::Sqlite>,
    now: SystemTime,
) -> Result<u64, StoreError> {
    let done = sqlx::query(
        "DELETE FROM drafts WHERE answers = 0
         AND updated_at < strftime('%Y-%m-%dT%H:%M:%fZ', ?1, 'unixepoch', ?2)",
    )
    .bind(seconds(now))
    .bind(EMPTY_DRAFT_MAX_AGE)
    .execute(&mut **tx)
    .await
    .context("removing empty drafts")?;
    if done.rows_affected() > 0 {
        tracing::info!(
            drafts.removed = done.rows_affected(),
            "empty drafts removed"
        );
    }
    Ok(done.rows_affected())
}

async fn start(
    pool: &SqlitePool,
    observations: &Observations,
    skipped: &[Property],
    for_sample: Option<&str>,
) -> Result<Draft, StoreError> {
    let id = uuid::Uuid::new_v4().to_string();
    let obs = serde_json::to_string(observations).map_err(|e| StoreError::Corrupt {
        what: "draft observations",
        id: id.clone(),
        detail: e.to_string(),
    })?;
    let skipped_json = serde_json::to_string(skipped).map_err(|e| StoreError::Corrupt {
        what: "draft skipped list",
        id: id.clone(),
        detail: e.to_string(),
    })?;
    let mut tx = super::write_tx(pool).await?;
    prune(&mut tx, SystemTime::now()).await?;
    let row: DraftRow = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "INSERT INTO drafts (id, created_at, updated_at, observations, skipped, answers, for_sample)
         VALUES (?1, {NOW}, {NOW}, ?2, ?3, ?4, ?5)
         RETURNING {COLUMNS}"
    )))
    .bind(&id)
    .bind(obs)
    .bind(skipped_json)
    .bind(answers(observations))
    .bind(for_sample)
    .fetch_one(&mut *tx)
    .await
    .context("creating a draft")?;
    tx.commit().await.context("committing a new draft")?;
    tracing::info!(draft.id = %id, "draft started");
    row.try_into()
}

/// The open (not discarded) draft with this id.
#[tracing::instrument(skip(pool))]
pub async fn get(pool: &SqlitePool, id: &str) -> Result<Option<Draft>, StoreError> {
    let row: Option<DraftRow> = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {COLUMNS} FROM drafts WHERE id = ?1 AND discarded_at IS NULL"
    )))
    .bind(id)
    .fetch_optional(pool)
    .await
    .context("reading a draft")?;
    row.map(Draft::try_from).transpose()
}

/// Saves a draft's observations and skipped list; false when there is no
/// such open draft.
#[tracing::instrument(skip(pool, observations))]
pub async fn save(
    pool: &SqlitePool,
    id: &str,
    observations: &Observations,
    skipped: &[Property],
) -> Result<bool, StoreError> {
    let obs = serde_json::to_string(observations).map_err(|e| StoreError::Corrupt {
        what: "draft observations",
        id: id.to_string(),
        detail: e.to_string(),
    })?;
    let skipped_json = serde_json::to_string(skipped).map_err(|e| StoreError::Corrupt {
        what: "draft skipped list",
        id: id.to_string(),
        detail: e.to_string(),
    })?;
    let answers = answers(observations);
    let done = sqlx::query(sqlx::AssertSqlSafe(format!(
        "UPDATE drafts SET observations = ?2, skipped = ?3, answers = ?4, updated_at = {NOW}
         WHERE id = ?1 AND discarded_at IS NULL"
    )))
    .bind(id)
    .bind(obs)
    .bind(skipped_json)
    .bind(answers)
    .execute(pool)
    .await
    .context("saving a draft")?;
    Ok(done.rows_affected() == 1)
}

/// Marks a draft as having reached its results (idempotent).
#[tracing::instrument(skip(pool))]
pub async fn finish(pool: &SqlitePool, id: &str) -> Result<(), StoreError> {
    sqlx::query(sqlx::AssertSqlSafe(format!(
        "UPDATE drafts SET finished_at = COALESCE(finished_at, {NOW}) WHERE id = ?1"
    )))
    .bind(id)
    .execute(pool)
    .await
    .context("finishing a draft")?;
    Ok(())
}

/// Discards a draft (a tombstone; the row stays). False when there is no
/// such open draft.
#[tracing::instrument(skip(pool))]
pub async fn discard(pool: &SqlitePool, id: &str) -> Result<bool, StoreError> {
    let done = sqlx::query(sqlx::AssertSqlSafe(format!(
        "UPDATE drafts SET discarded_at = {NOW} WHERE id = ?1 AND discarded_at IS NULL"
    )))
    .bind(id)
    .execute(pool)
    .await
    .context("discarding a draft")?;
    Ok(done.rows_affected() == 1)
}

/// Records that a draft was saved into the sample `sample_id` (the latest
/// save wins). False when there is no such open draft.
#[tracing::instrument(skip(pool))]
pub async fn mark_saved(pool: &SqlitePool, id: &str, sample_id: &str) -> Result<bool, StoreError> {
    let done =
        sqlx::query("UPDATE drafts SET saved_as = ?2 WHERE id = ?1 AND discarded_at IS NULL")
            .bind(id)
            .bind(sample_id)
            .execute(pool)
            .await
            .context("recording the sample a draft was saved as")?;
    Ok(done.rows_affected() == 1)
}

/// Open drafts in which something was observed, most recently changed
/// first (a draft with nothing observed is not worth resuming).
#[tracing::instrument(skip(pool))]
pub async fn list_open(pool: &SqlitePool, limit: i64) -> Result<Vec<Draft>, StoreError> {
    let rows: Vec<DraftRow> = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "SELECT {COLUMNS} FROM drafts WHERE discarded_at IS NULL AND answers > 0
         ORDER BY updated_at DESC, id LIMIT ?1"
    )))
    .bind(limit)
    .fetch_all(pool)
    .await
    .context("listing drafts")?;
    rows.into_iter().map(Draft::try_from).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::base::vocab::Cleavage;

    async fn pool() -> (SqlitePool, tempfile::TempDir) {
        let dir = tempfile::tempdir().expect("tempdir");
        let pool = crate::store::open(&dir.path().join("d.sqlite"))
            .await
            .expect("open");
        (pool, dir)
    }

    fn cleavage() -> Observations {
        Observations {
            cleavage: Some(Cleavage::OnePerfect),
            ..Default::default()
        }
    }

    async fn count(pool: &SqlitePool) -> i64 {
        sqlx::query_scalar("SELECT count(*) FROM drafts")
            .fetch_one(pool)
            .await
            .expect("count")
    }

    #[tokio::test]
    async fn a_draft_keeps_its_answers_across_a_reopen() {
        let (pool, dir) = pool().await;
        let d = create(&pool, &Observations::default(), &[])
            .await
            .expect("create");
        let obs = cleavage();
        assert!(
            save(&pool, &d.id, &obs, &[Property::Streak])
                .await
                .expect("save")
        );
        pool.close().await;
        let pool = crate::store::open(&dir.path().join("d.sqlite"))
            .await
            .expect("reopen");
        let back = get(&pool, &d.id).await.expect("get").expect("exists");
        assert_eq!(back.observations, obs);
        assert_eq!(back.skipped, vec![Property::Streak]);
        assert!(back.finished_at.is_none());
    }

    #[tokio::test]
    async fn a_discarded_draft_is_gone_from_the_list_but_its_row_remains() {
        let (pool, _dir) = pool().await;
        let d = create(&pool, &cleavage(), &[]).await.expect("create");
        assert_eq!(list_open(&pool, 10).await.expect("list").len(), 1);
        assert!(discard(&pool, &d.id).await.expect("discard"));
        assert!(!discard(&pool, &d.id).await.expect("twice"));
        assert!(get(&pool, &d.id).await.expect("get").is_none());
        assert!(list_open(&pool, 10).await.expect("list").is_empty());
        assert_eq!(count(&pool).await, 1);
        assert!(
            !save(&pool, &d.id, &Observations::default(), &[])
                .await
                .expect("save")
        );
    }

    #[tokio::test]
    async fn a_draft_with_nothing_observed_is_not_listed() {
        let (pool, _dir) = pool().await;
        let empty = create(&pool, &Observations::default(), &[Property::Setting])
            .await
            .expect("create");
        let full = create(&pool, &cleavage(), &[]).await.expect("create");
        let listed: Vec<String> = list_open(&pool, 10)
            .await
            .expect("list")
            .into_iter()
            .map(|d| d.id)
            .collect();
        assert_eq!(listed, vec![full.id]);
        // It still opens by its address until it is removed.
        assert!(get(&pool, &empty.id).await.expect("get").is_some());
    }

    #[tokio::test]
    async fn an_empty_draft_older_than_a_day_is_removed_and_a_non_empty_one_stays() {
        let (pool, _dir) = pool().await;
        let empty = create(&pool, &Observations::default(), &[Property::Streak])
            .await
            .expect("create");
        let full = create(&pool, &cleavage(), &[]).await.expect("create");
        let hour = std::time::Duration::from_secs(3600);
        let now = SystemTime::now();
        // Within the day: nothing goes.
        assert_eq!(
            remove_stale_empty(&pool, now + 23 * hour)
                .await
                .expect("cleanup"),
            0
        );
        assert!(get(&pool, &empty.id).await.expect("get").is_some());
        // A day and an hour later: the empty one is gone, row and all.
        assert_eq!(
            remove_stale_empty(&pool, now + 25 * hour)
                .await
                .expect("cleanup"),
            1
        );
        assert!(get(&pool, &empty.id).await.expect("get").is_none());
        assert!(get(&pool, &full.id).await.expect("get").is_some());
        assert_eq!(count(&pool).await, 1);
        // Even a year on, what was observed stays.
        remove_stale_empty(&pool, now + 24 * 365 * hour)
            .await
            .expect("cleanup");
        assert!(get(&pool, &full.id).await.expect("get").is_some());
    }

    #[tokio::test]
    async fn an_unknown_id_is_none() {
        let (pool, _dir) = pool().await;
        assert!(get(&pool, "not-a-draft").await.expect("get").is_none());
    }
}
