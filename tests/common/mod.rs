//! Helpers shared by integration tests (each test file that needs them says `mod common;`).
#![allow(dead_code)]

pub mod clouds;
