//! Nervure: the graph-building core of a Mapper workbench.
//!
//! Data flows one way, each stage a plain value the next one reads:
//!
//! ```text
//! bytes ─► Table ─► rows kept ─► Points ─► lens values ─► Cover ─► clusters ─► Nerve ─► Layout
//! ```
//!
//! This crate knows nothing of the DOM or of WebAssembly except in `web`, the thin
//! wasm-bindgen surface compiled only for `wasm32`. Everything else is tested natively.
//!
//! A Mapper graph depends on its settings: it is a hypothesis about the data's shape to
//! be confirmed, not a finding.

pub mod error;
pub mod settings;
pub mod table;
pub mod timecol;
pub mod align;
pub mod campaign;
pub mod derive;
pub mod subset;
pub mod missing;
pub mod points;
pub mod filter;
pub mod cover;
pub mod cluster;
pub mod graph;
pub mod layout;
pub mod auto;
pub mod engine;
pub mod first_look;
pub mod shape;
pub mod export;
pub mod graphfile;
pub mod parts;
pub mod results;
pub mod explain;
pub mod rng;
pub mod scatter;

#[cfg(target_arch = "wasm32")]
pub mod web;

// The page's engine relies on wasm SIMD for its speed (`.cargo/config.toml` turns it on);
// a build without it (RUSTFLAGS set in the environment replaces the config's flags) would
// be a third slower for no visible reason.
#[cfg(all(target_arch = "wasm32", not(target_feature = "simd128")))]
compile_error!("the wasm engine is built with SIMD: `.cargo/config.toml` sets `-C target-feature=+simd128` for wasm32; add it to RUSTFLAGS if you set those");

pub use error::{Error, Result};
pub use settings::Settings;
pub use table::{Table, TableReader, ReadOptions};
pub use engine::{build, Build, Summary, Workbench, NodeStat, LensHistogram};
