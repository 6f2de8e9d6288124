//! Integration tests: the real router in-process over a fresh, migrated
//! SQLite file per test (`#[sqlx::test]`), and smoke tests that start the
//! real binary and talk to it over HTTP.

mod access;
mod accounts;
mod certificates;
mod compute;
mod faults;
mod foundation;
mod fuzz_regressions;
mod generate;
mod helpers;
mod hostile;
mod ingest;
mod media;
mod pages;
mod process;
mod records;
mod reference;
mod register;
mod results;
mod security;
mod smoke;
mod switches;
