//! Questioning drafts: create, read, save, list, finish, discard.

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
}

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
        })
    }
}

const NOW: &str = "strftime('%Y-%m-%dT%H:%M:%fZ', 'now')";

/// Drafts with no answers older than this are removed when a new draft is
/// started, so reloading the start page does not pile up empty drafts.
const EMPTY_DRAFT_MAX_AGE: &str = "-1 day";

/// Starts a new, empty draft.
#[tracing::instrument(skip(pool))]
pub async fn create(pool: &SqlitePool) -> Result<Draft, StoreError> {
    start(pool, &Observations::default(), None).await
}

/// Starts a draft that re-examines the saved sample `sample_id` from its
/// observations.
#[tracing::instrument(skip(pool, observations))]
pub async fn create_for_sample(
    pool: &SqlitePool,
    sample_id: &str,
    observations: &Observations,
) -> Result<Draft, StoreError> {
    start(pool, observations, Some(sample_id)).await
}

fn answers(observations: &Observations) -> i64 {
    Property::ALL
        .iter()
        .filter(|p| p.is_observed(observations))
        .count() as i64
}

async fn start(
    pool: &SqlitePool,
    observations: &Observations,
    for_sample: Option<&str>,
) -> Result<Draft, StoreError> {
    let id = uuid::Uuid::new_v4().to_string();
    let obs = serde_json::to_string(observations).map_err(|e| StoreError::Corrupt {
        what: "draft observations",
        id: id.clone(),
        detail: e.to_string(),
    })?;
    let mut tx = super::write_tx(pool).await?;
    sqlx::query(
        "DELETE FROM drafts WHERE answers = 0 AND finished_at IS NULL
         AND updated_at < strftime('%Y-%m-%dT%H:%M:%fZ', 'now', ?1)",
    )
    .bind(EMPTY_DRAFT_MAX_AGE)
    .execute(&mut *tx)
    .await
    .context("pruning empty drafts")?;
    let row: DraftRow = sqlx::query_as(sqlx::AssertSqlSafe(format!(
        "INSERT INTO drafts (id, created_at, updated_at, observations, answers, for_sample)
         VALUES (?1, {NOW}, {NOW}, ?2, ?3, ?4)
         RETURNING id, created_at, updated_at, observations, skipped, finished_at, for_sample"
    )))
    .bind(&id)
    .bind(obs)
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
    let row: Option<DraftRow> = sqlx::query_as(
        "SELECT id, created_at, updated_at, observations, skipped, finished_at, for_sample
         FROM drafts WHERE id = ?1 AND discarded_at IS NULL",
    )
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

/// Open drafts, most recently changed first.
#[tracing::instrument(skip(pool))]
pub async fn list_open(pool: &SqlitePool, limit: i64) -> Result<Vec<Draft>, StoreError> {
    let rows: Vec<DraftRow> = sqlx::query_as(
        "SELECT id, created_at, updated_at, observations, skipped, finished_at, for_sample
         FROM drafts WHERE discarded_at IS NULL
         ORDER BY updated_at DESC, id LIMIT ?1",
    )
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

    #[tokio::test]
    async fn a_draft_keeps_its_answers_across_a_reopen() {
        let (pool, dir) = pool().await;
        let d = create(&pool).await.expect("create");
        let obs = Observations {
            cleavage: Some(Cleavage::OnePerfect),
            ..Default::default()
        };
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
        let d = create(&pool).await.expect("create");
        assert_eq!(list_open(&pool, 10).await.expect("list").len(), 1);
        assert!(discard(&pool, &d.id).await.expect("discard"));
        assert!(!discard(&pool, &d.id).await.expect("twice"));
        assert!(get(&pool, &d.id).await.expect("get").is_none());
        assert!(list_open(&pool, 10).await.expect("list").is_empty());
        let rows: i64 = sqlx::query_scalar("SELECT count(*) FROM drafts")
            .fetch_one(&pool)
            .await
            .expect("count");
        assert_eq!(rows, 1);
        assert!(
            !save(&pool, &d.id, &Observations::default(), &[])
                .await
                .expect("save")
        );
    }

    #[tokio::test]
    async fn an_unknown_id_is_none() {
        let (pool, _dir) = pool().await;
        assert!(get(&pool, "not-a-draft").await.expect("get").is_none());
    }
}
