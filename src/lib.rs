//! # gapwise
//!
//! The gapwise package: re-exports [`gapwise_core`], so that the integration tests in
//! `tests/` and the embedding examples in `examples/` are targets of one package.
//! See the README for the job gapwise does and the safety caution that comes with it.

#![deny(missing_docs)]

pub use gapwise_core::*;
