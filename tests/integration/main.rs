//! Integration tests of gapwise, one binary with a module per area.
//! Each check of a computed value names its source beside it.

mod bad_input;
mod common;
mod design_flow;
mod emi;
mod feedback;
mod flyback;
mod fuzz;
mod magnetics;
mod mains;
mod passives;
mod pinned;
mod readme;
mod recipes;
mod safety;
mod sandbox;
mod script;
mod supply;
mod units;
mod verdicts;
mod wires;
