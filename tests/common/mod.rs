//! Helpers shared by integration tests (each test file that needs them says `mod common;`;
//! `shapes.rs` and `panel.rs` are also included one by one with `#[path]`).
#![allow(dead_code)]

pub mod clouds;
pub mod shapes;
