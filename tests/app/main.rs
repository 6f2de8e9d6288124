//! Integration tests: the real router in-process over a fresh, migrated
//! SQLite file per test (`#[sqlx::test]`), and smoke tests that start the
//! real binary and talk to it over HTTP.

mod accounts;
mod certificates;
mod compute;
mod foundation;
mod generate;
mod helpers;
mod pages;
mod records;
mod reference;
mod register;
mod results;
mod smoke;
