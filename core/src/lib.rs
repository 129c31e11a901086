//! # gapwise-core
//!
//! Unit-checked design rules for small mains-powered isolated supplies (flyback converters of
//! about 5–75 W), exposed to Rhai scripts.
//!
//! A tour of the main types:
//! - [`units`]: `uom` quantities at every public boundary; [`units::Quantity`] (value in SI plus
//!   dimension) for scripts; the one parser ([`units::parse_quantity`]) and formatter
//!   ([`units::format_quantity`]) every value goes through; [`units::Decibel`] kept apart from ratios.
//! - Domain modules ([`passives`], [`magnetics`]) are pure functions over typed inputs that
//!   return typed results listing every intermediate value ([`report::Record`]).
//! - [`rules`]: a [`rules::Rule`] turns a value into value, limit, margin and pass / warn / fail.
//! - [`report`]: named values and [`report::Table`]s written as text, CSV or JSON.
//! - [`script`]: the one sandboxed engine ([`script::ScriptHost`]) with every function
//!   registered together with its help ([`script::FunctionDoc`]).
//!
//! ```
//! use gapwise_core::script::ScriptHost;
//! let host = ScriptHost::default();
//! let v = host.eval("12 * V * (1.5 * A)", "<doc>").unwrap();
//! assert_eq!(host.display(&v), "18 W");
//! ```
//!
//! Results are design aids: the applicable standard's current edition, local codes and a
//! qualified person decide; verify by measurement and hipot test.

#![deny(missing_docs)]

pub mod emi;
mod error;
pub mod feedback;
pub mod flyback;
pub mod magnetics;
pub mod mains;
pub(crate) mod numeric;
pub mod passives;
pub mod report;
pub mod rules;
pub mod safety;
pub mod script;
pub mod supply;
pub mod units;

pub use error::{Error, ErrorKind, Result};
pub use report::SAFETY_CAUTION;
