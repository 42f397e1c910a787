//! Router tests of the JSON API, every error case of the contract included.
//! One binary; `helpers` builds a fresh migrated SQLite per test.

mod docs;
mod edge;
mod flow_pages;
mod helpers;
mod identify;
mod log_admin;
mod minerals;
mod names;
mod reference_pages;
mod sample_pages;
mod samples;
mod service;
