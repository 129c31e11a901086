//! The transformer's operating point taken from a flyback design, so that the transformer is
//! designed for the currents, duty cycle and current limit the power stage computed.

use super::transformer::{AdditionalOutput, BiasWinding, TransformerSpec};
use crate::error::{Error, Result};
use crate::flyback::{ConductionMode, FlybackDesign, FlybackSpec, OperatingPoint};
use crate::report::{Field, Record};
use crate::units::{ElectricCurrent, ElectricPotential, Frequency, Inductance};

/// The operating-point inputs of a [`TransformerSpec`], read from a flyback design.
#[derive(Clone, Debug, PartialEq)]
pub struct TransformerOperatingPoint {
    /// The corner the currents come from (the highest primary peak below the current limit).
    pub corner: &'static str,
    /// Nominal primary inductance of the design.
    pub primary_inductance: Inductance,
    /// Switching frequency.
    pub switching_frequency: Frequency,
    /// Primary peak current at that corner.
    pub primary_peak_current: ElectricCurrent,
    /// Primary valley current at that corner (zero in DCM).
    pub primary_valley_current: ElectricCurrent,
    /// Switch duty cycle at that corner.
    pub duty_cycle: f64,
    /// Fraction of the period the secondary conducts (1 − D in CCM and at the boundary,
    /// the demagnetising fraction in DCM).
    pub secondary_conduction_fraction: f64,
    /// The controller's nominal peak-current limit.
    pub current_limit: ElectricCurrent,
    /// Its relative tolerance.
    pub current_limit_tolerance: f64,
    /// Rise past the highest limit during the sense delay: the design's highest peak at the
    /// current limit less I_lim·(1 + tol).
    pub current_limit_overshoot: ElectricCurrent,
    /// Highest primary peak with the regulated output shorted (the design's short circuit;
    /// None when the design has none).
    pub short_circuit_peak_current: Option<ElectricCurrent>,
    /// Reflected voltage.
    pub reflected_voltage: ElectricPotential,
    /// Regulated output voltage.
    pub output_voltage: ElectricPotential,
    /// Its rectifier's forward drop.
    pub rectifier_drop: ElectricPotential,
    /// Full-load current of the regulated output.
    pub output_current: ElectricCurrent,
    /// Every other output of the specification, in its order.
    pub additional_outputs: Vec<AdditionalOutput>,
    /// The bias winding, if the specification has one.
    pub bias: Option<BiasWinding>,
}

/// The transformer's operating point from a flyback specification and its design.
///
/// Takes the corner with the highest primary peak current among the corners below the current
/// limit (in practice low line, full load): it sets the copper loss, the flux swing and the
/// core loss. The flux limit is checked separately at the current limit with its tolerance,
/// which this carries. The regulated output (voltage, rectifier drop, current) and every other
/// output come from the specification; `design` must have been made from `spec`.
/// Reference: the flyback's magnetising-current waveform, Erickson & Maksimović, 3rd ed.
/// (2020), chapter 6 (flyback) and chapter 5 (DCM).
pub fn transformer_operating_point(
    spec: &FlybackSpec,
    design: &FlybackDesign,
) -> Result<TransformerOperatingPoint> {
    let output = spec.outputs.get(spec.regulated_output).ok_or_else(|| {
        Error::invalid(format!(
            "`regulated_output` = {} does not name one of the {} outputs",
            spec.regulated_output,
            spec.outputs.len()
        ))
    })?;
    let corner: &OperatingPoint = design
        .corners
        .iter()
        .filter(|c| !c.corner.contains("limit"))
        .max_by(|a, b| {
            a.primary_current_peak
                .value
                .total_cmp(&b.primary_current_peak.value)
        })
        .ok_or_else(|| Error::invalid("the flyback design has no operating corner"))?;
    let conduction = match corner.mode {
        ConductionMode::Discontinuous => corner.demagnetising_duty,
        ConductionMode::Continuous | ConductionMode::Boundary => 1.0 - corner.duty_cycle,
    };
    let name = match corner.corner.as_str() {
        "low_line_full_load" => "low_line_full_load",
        "high_line_full_load" => "high_line_full_load",
        "low_line_light_load" => "low_line_light_load",
        "high_line_light_load" => "high_line_light_load",
        _ => "other",
    };
    Ok(TransformerOperatingPoint {
        corner: name,
        primary_inductance: design.primary_inductance,
        switching_frequency: design.switching_frequency,
        primary_peak_current: corner.primary_current_peak,
        primary_valley_current: corner.primary_current_valley,
        duty_cycle: corner.duty_cycle,
        secondary_conduction_fraction: conduction,
        current_limit: design.current_limit,
        current_limit_tolerance: design.current_limit_tolerance,
        current_limit_overshoot: crate::units::si(
            (design.primary_current_peak_at_limit().value
                - design.current_limit.value * (1.0 + design.current_limit_tolerance))
                .max(0.0),
        ),
        short_circuit_peak_current: design
            .short_circuit
            .iter()
            .map(|p| p.primary_current_peak)
            .reduce(|a, b| if b > a { b } else { a }),
        reflected_voltage: design.reflected_voltage,
        output_voltage: output.voltage,
        rectifier_drop: output.rectifier_drop,
        output_current: output.current,
        additional_outputs: spec
            .outputs
            .iter()
            .enumerate()
            .filter(|(k, _)| *k != spec.regulated_output)
            .map(|(_, o)| AdditionalOutput {
                voltage: o.voltage,
                rectifier_drop: o.rectifier_drop,
                current: o.current,
            })
            .collect(),
        bias: spec.bias,
    })
}

impl TransformerOperatingPoint {
    /// Writes these operating-point values into a transformer specification, leaving the core,
    /// material, construction and house limits as they are.
    pub fn apply_to(&self, spec: &mut TransformerSpec) {
        spec.primary_inductance = self.primary_inductance;
        spec.switching_frequency = self.switching_frequency;
        spec.primary_peak_current = self.primary_peak_current;
        spec.primary_valley_current = self.primary_valley_current;
        spec.duty_cycle = self.duty_cycle;
        spec.secondary_conduction_fraction = self.secondary_conduction_fraction;
        spec.current_limit = self.current_limit;
        spec.current_limit_tolerance = self.current_limit_tolerance;
        spec.current_limit_overshoot = self.current_limit_overshoot;
        spec.short_circuit_peak_current = self.short_circuit_peak_current;
        spec.reflected_voltage = self.reflected_voltage;
        spec.output_voltage = self.output_voltage;
        spec.rectifier_drop = self.rectifier_drop;
        spec.output_current = Some(self.output_current);
        spec.additional_outputs = self.additional_outputs.clone();
        spec.bias = self.bias;
    }
}

crate::serialize_as_record!(TransformerOperatingPoint);

impl Record for TransformerOperatingPoint {
    /// Field names match the keys of the script function `transformer_design`, so the record
    /// converts into a spec map that only needs the core and construction added (the script
    /// function adds `additional_outputs` as an array of maps).
    fn fields(&self) -> Vec<Field> {
        let mut f = vec![
            Field::quantity("primary_inductance", self.primary_inductance),
            Field::quantity("switching_frequency", self.switching_frequency),
            Field::quantity("primary_peak_current", self.primary_peak_current),
            Field::quantity("primary_valley_current", self.primary_valley_current),
            Field::new("duty_cycle", self.duty_cycle),
            Field::new(
                "secondary_conduction_fraction",
                self.secondary_conduction_fraction,
            ),
            Field::quantity("current_limit", self.current_limit),
            Field::new("current_limit_tolerance", self.current_limit_tolerance),
            Field::quantity("current_limit_overshoot", self.current_limit_overshoot),
            Field::quantity("reflected_voltage", self.reflected_voltage),
            Field::quantity("output_voltage", self.output_voltage),
            Field::quantity("rectifier_drop", self.rectifier_drop),
            Field::quantity("output_current", self.output_current),
        ];
        if let Some(i) = self.short_circuit_peak_current {
            f.push(Field::quantity("short_circuit_peak_current", i));
        }
        if let Some(b) = self.bias {
            f.push(Field::quantity("bias_voltage", b.voltage));
            f.push(Field::quantity("bias_rectifier_drop", b.rectifier_drop));
            f.push(Field::quantity("bias_current", b.current));
        }
        f
    }
}
