//! Time-resolved decoding: when does the population carry the information?
//!
//! A recording ([`data::TimeDataset`], from a binned table or from spike events counted in sliding
//! [`windows`]) is decoded at every window with the same protocol as a trial table ([`plan`]): the same balancing,
//! folds, train-fold standardisation and repeats, drawn once per repeat and shared by every window. Label shuffles
//! give a null at every window, and a cluster-based permutation test ([`clusters`]) says which spans of the curve
//! (and, with temporal generalization, which regions of the train × test matrix) hold information while
//! controlling the error over all windows at once. [`report`] assembles the result; [`text`] and [`plots`] show it.

pub mod clusters;
pub mod data;
pub mod extract;
pub mod nwb;
pub mod plan;
pub mod plots;
pub mod report;
pub mod text;
pub mod unit_filter;
pub mod windows;
