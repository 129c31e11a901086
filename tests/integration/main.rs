//! Integration tests of gapwise, one binary with a module per area.
//! Each check of a computed value names its source beside it.

mod common;
mod magnetics;
mod passives;
mod recipes;
mod sandbox;
mod script;
mod units;
mod wires;
