//! gammatrace core: point-group detection, unshifted-atom counting, readers and batches.
//!
//! Every module except this file is plain Rust (no pyo3, no numpy), unit-tested with
//! `cargo test`. This file holds the crate root and, behind the `python` feature that
//! maturin switches on, the only Python-aware code: array conversion and error mapping.
#![cfg_attr(
    not(test),
    deny(clippy::unwrap_used, clippy::expect_used, clippy::panic)
)]
#![warn(missing_docs)]

pub mod count;
pub mod error;
pub mod readers;

pub use error::{Error, Result};
