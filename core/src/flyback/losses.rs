//! The loss budget of one operating point: switch conduction and switching, clamp, output
//! rectifiers, bridge, bulk and output capacitor ESR, transformer estimate and controller.

use crate::report::{Field, Table};
use crate::units::{si, Power};

/// Where the input power goes, at one operating point. Sums to the line input power.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct LossBudget {
    /// Power delivered to the loads.
    pub output: Power,
    /// Switch conduction, I_rms²·R_ds(on) hot.
    pub switch_conduction: Power,
    /// Switch output capacitance discharged at turn-on, ½·C_oss·V²·f.
    pub switch_capacitive: Power,
    /// Current-voltage overlap at turn-on (CCM) and turn-off, ½·V·I·t·f each.
    pub switch_overlap: Power,
    /// Clamp dissipation.
    pub clamp: Power,
    /// Output rectifiers, V_f·I_out each.
    pub output_rectifiers: Power,
    /// Input bridge, 2·V_f·I_avg.
    pub bridge: Power,
    /// Bulk capacitor ESR, (I_lf² + I_hf²)·ESR.
    pub bulk_capacitor: Power,
    /// Output capacitors' ESR, I_ripple²·ESR each.
    pub output_capacitors: Power,
    /// Transformer copper and core (an estimate: a fraction of output power).
    pub transformer: Power,
    /// Controller supply (bias winding power with its rectifier, or the given controller power).
    pub controller: Power,
    /// Difference between the line power of a fixed efficiency estimate and the modelled
    /// losses, P_out/η − P_out − ΣP_loss (zero when efficiency is computed from the model;
    /// negative when the estimate is more optimistic than the loss model).
    pub unaccounted: Power,
}

impl LossBudget {
    /// Sum of the modelled losses (without `output` and `unaccounted`): the plain sum of the
    /// loss fields; valid for any budget of non-negative losses.
    pub fn modelled_losses(&self) -> Power {
        si(self.switch_conduction.value
            + self.switch_capacitive.value
            + self.switch_overlap.value
            + self.clamp.value
            + self.output_rectifiers.value
            + self.bridge.value
            + self.bulk_capacitor.value
            + self.output_capacitors.value
            + self.transformer.value
            + self.controller.value)
    }
    /// Output plus every loss plus unaccounted: the line input power (energy conservation,
    /// P_in = P_out + ΣP_loss).
    pub fn total(&self) -> Power {
        si(self.output.value + self.modelled_losses().value + self.unaccounted.value)
    }
    /// The budget as (name, power) pairs in review order (output first, unaccounted last).
    pub fn items(&self) -> Vec<(&'static str, Power)> {
        vec![
            ("output", self.output),
            ("switch_conduction", self.switch_conduction),
            ("switch_capacitive", self.switch_capacitive),
            ("switch_overlap", self.switch_overlap),
            ("clamp", self.clamp),
            ("output_rectifiers", self.output_rectifiers),
            ("bridge", self.bridge),
            ("bulk_capacitor", self.bulk_capacitor),
            ("output_capacitors", self.output_capacitors),
            ("transformer", self.transformer),
            ("controller", self.controller),
            ("unaccounted", self.unaccounted),
        ]
    }
    /// The budget as a table: item, power, share of input power (P_item/P_in·100, rounded to
    /// 0.1 %); last row the total.
    pub fn table(&self) -> Table {
        let total = self.total().value;
        let mut t = Table::new();
        for (name, p) in self.items() {
            t.push_row(vec![
                Field::new("item", name),
                Field::quantity("power", p),
                Field::new(
                    "percent_of_input",
                    if total > 0.0 {
                        (p.value / total * 1000.0).round() / 10.0
                    } else {
                        0.0
                    },
                ),
            ]);
        }
        t.push_row(vec![
            Field::new("item", "input"),
            Field::quantity("power", self.total()),
            Field::new("percent_of_input", 100.0),
        ]);
        t
    }
}
