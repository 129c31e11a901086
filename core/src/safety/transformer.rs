//! Transformer insulation for a barrier's grade: margin-tape construction or fully insulated
//! (triple-insulated) wire, and the tape layers between windings — a plain spec the magnetics
//! build sheet can consume.

use super::barrier::BarrierRequirement;
use super::classes::InsulationGrade;
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::{si, Length};

/// How the windings are kept apart.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WindingConstruction {
    /// Enamelled wire, insulating tape margins at both ends of each winding, tape between.
    MarginTape,
    /// The secondary (or primary) in fully insulated wire with three extruded layers, each
    /// layer tested; no margins needed.
    TripleInsulatedWire,
}

impl WindingConstruction {
    /// Reads `margin_tape` / `triple_insulated_wire`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "margin_tape" => Ok(Self::MarginTape),
            "triple_insulated_wire" => Ok(Self::TripleInsulatedWire),
            other => Err(Error::unknown(format!(
                "unknown `construction` \"{other}\"; expected \"margin_tape\" or \"triple_insulated_wire\""
            ))),
        }
    }
    /// The name.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::MarginTape => "margin_tape",
            Self::TripleInsulatedWire => "triple_insulated_wire",
        }
    }
}

/// Insulation of the transformer across one barrier.
#[derive(Clone, Debug, PartialEq)]
pub struct TransformerInsulation {
    /// The construction.
    pub construction: WindingConstruction,
    /// Margin at each end of each winding (zero with fully insulated wire).
    pub margin_width_each_side: Length,
    /// Tape layers between the windings across the barrier.
    pub interwinding_tape_layers: i64,
    /// Layers of tape over the outermost winding.
    pub outer_tape_layers: i64,
    /// The creepage the margins provide for (the barrier's product creepage).
    pub creepage_required: Length,
    /// How the values were set.
    pub rule: String,
}

/// Transformer insulation for a barrier.
///
/// Rules (common practice, no published source, built on the barrier's requirements):
/// - margin tape: the creepage path from one winding to the other runs across the margins of
///   both, so each margin is half the product creepage (and the terminations leave the bobbin
///   with the full creepage and clearance); between the windings, the thin-sheet layer count
///   "any two passing" of the grade (3 for reinforced; IEC 62368-1:2018 5.4.4.6, value
///   recalled from memory);
/// - fully insulated wire: no margins; the wire's own layers carry the grade, so one layer of
///   tape between windings is kept for mechanical protection; the wire must be approved for
///   the grade and working voltage (IEC 62368-1:2018 Annex J, value recalled from memory).
///
/// Functional insulation needs no transformer insulation: an error says so.
pub fn transformer_insulation(
    requirement: &BarrierRequirement,
    construction: WindingConstruction,
) -> Result<TransformerInsulation> {
    if requirement.grade == InsulationGrade::Functional {
        return Err(Error::invalid(
            "`grade` functional: the barrier needs no insulation between windings; choose basic, supplementary, reinforced or double",
        ));
    }
    let creepage = requirement.creepage;
    Ok(match construction {
        WindingConstruction::MarginTape => TransformerInsulation {
            construction,
            margin_width_each_side: si(creepage.value / 2.0),
            interwinding_tape_layers: requirement.thin_sheet_layers_any_two_passing,
            outer_tape_layers: requirement.thin_sheet_layers_any_two_passing,
            creepage_required: creepage,
            rule: format!(
                "margins each half the {} creepage; {} tape layers of which any two pass the {} electric strength test (common practice, no published source)",
                requirement.grade, requirement.thin_sheet_layers_any_two_passing, requirement.grade
            ),
        },
        WindingConstruction::TripleInsulatedWire => TransformerInsulation {
            construction,
            margin_width_each_side: si(0.0),
            interwinding_tape_layers: 1,
            outer_tape_layers: 1,
            creepage_required: creepage,
            rule: format!(
                "fully insulated wire approved for {} insulation carries the barrier; one tape layer for mechanical protection; where the wire leaves the winding, its terminations on the bobbin and board still need the barrier's clearance and creepage (common practice, no published source)",
                requirement.grade
            ),
        },
    })
}

crate::serialize_as_record!(TransformerInsulation);

impl Record for TransformerInsulation {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("construction", self.construction.as_str()),
            Field::quantity("margin_width_each_side", self.margin_width_each_side),
            Field::new("interwinding_tape_layers", self.interwinding_tape_layers),
            Field::new("outer_tape_layers", self.outer_tape_layers),
            Field::quantity("creepage_required", self.creepage_required),
            Field::new("rule", self.rule.as_str()),
        ]
    }
}
