//! Is the shape real? The shape stage reads a built graph and its settings and says how
//! much of what the graph shows the data support: the graph's extended persistence
//! diagram ([`persistence`]), distances between diagrams ([`bottleneck`]), bootstrap
//! confidence for each feature and comparisons of two data sets ([`confidence`]),
//! settings suggested from the data ([`suggest`]) and sweeps over a grid of settings
//! ([`sweep`]), the nodes that carry each feature ([`support`]) and second tables made by
//! swapping columns ([`swap`]). The method follows Carrière, Michel, Oudot, "Statistical
//! analysis and parameter selection for Mapper", JMLR 19, 2018, and Cohen-Steiner,
//! Edelsbrunner, Harer, "Extending persistence using Poincaré and Lefschetz duality", 2009.
//!
//! Not here: building graphs ([`crate::engine`]) or drawing anything.

pub mod persistence;
pub mod bottleneck;
pub mod confidence;
pub mod suggest;
pub mod sweep;
pub mod support;
pub mod swap;

pub use bottleneck::{bottleneck, bottleneck_points};
pub use confidence::{bootstrap, compare, compare_pair, Bootstrap, Comparing, Comparison, Confidence};
pub use persistence::{extended_persistence, Diagram, Feature, Kind};
pub use suggest::{suggest, Suggestion};
pub use sweep::{sweep, Cell, Grid, Sweeping};
pub use support::supports;
