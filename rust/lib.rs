//! gammatrace core: point-group detection, unshifted-atom counting, readers and batches.
//!
//! Every module is plain Rust (no pyo3, no numpy), unit-tested with `cargo test`, except
//! `python/`: behind the `python` feature that maturin switches on, it holds the only
//! Python-aware code (the `_core` module, array conversion and error mapping).
#![cfg_attr(
    not(test),
    deny(clippy::unwrap_used, clippy::expect_used, clippy::panic)
)]
#![warn(missing_docs)]

pub mod batch;
pub mod count;
pub mod detect;
pub mod error;
pub mod grid;
pub mod lookup;
pub mod ops;
pub mod parallel;
pub mod readers;
pub mod reduce;
pub mod structure;
#[cfg(test)]
mod testutil;

pub use error::{Error, Result};

#[cfg(feature = "python")]
mod python;
