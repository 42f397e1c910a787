//! basal: field identification of sheet silicates and their lookalikes, and
//! the sample log that keeps each specimen's record.
//!
//! Layout (layers only point inward):
//!
//! - [`chem`]: formulae, IUPAC standard atomic weights, ideal compositions.
//! - [`base`]: the curated property base, compiled in from `src/base/base.toml`.
//! - [`engine`]: observations, scoring, next-question ranking, cautions.
//! - [`store`]: SQLite (sqlx) behind named async functions.
//! - [`web`]: axum handlers and the JSON API.
//! - [`cli`]: command-line options and configuration.
//!
//! `chem`, `base` and `engine` are pure: no I/O, no axum, no sqlx.

pub mod base;
pub mod chem;
pub mod cli;
pub mod demo;
pub mod engine;
pub mod import;
pub mod samples;
pub mod store;
pub mod web;
