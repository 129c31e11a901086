//! The converter side of the input filter design, read from a flyback design: switching
//! frequency, primary current shape, drain-voltage trapezoid, bulk capacitor, lowest bulk
//! voltage and input power at full load, highest line voltage.

use super::design::InputFilterSpec;
use super::spectrum::{DrainVoltageShape, PrimaryCurrentShape};
use crate::error::{Error, Result};
use crate::flyback::{ConductionMode, FlybackDesign, OperatingPoint};
use crate::report::{Field, Record};
use crate::units::validate::non_negative;
use crate::units::{si, Capacitance, ElectricCurrent, ElectricPotential, Frequency, Power, Time};

/// Default drain-voltage rise (and fall) time, seconds: 30 ns, typical of a 650 V switch in a
/// 5–75 W flyback with a gate resistor of some tens of ohms (common practice, no published
/// source). Measure it on the prototype and pass the measured value.
pub const DEFAULT_DRAIN_RISE_TIME_S: f64 = 30e-9;

/// Largest share of the off-time that rise plus fall may take; longer edges are shortened
/// to fit (the trapezoid must fit in one period).
pub const MAX_EDGE_SHARE_OF_OFF_TIME: f64 = 0.5;

/// The converter's waveforms and input values at one corner of a flyback design, as the
/// input filter design needs them.
#[derive(Clone, Debug, PartialEq)]
pub struct FlybackEmiSource {
    /// Corner the waveforms come from.
    pub corner: String,
    /// Conduction mode at that corner.
    pub mode: ConductionMode,
    /// Switching frequency.
    pub switching_frequency: Frequency,
    /// Primary current: CCM trapezoid (valley, peak, duty) or DCM/boundary triangle.
    pub primary_current: PrimaryCurrentShape,
    /// Drain voltage trapezoid: bulk peak of the corner plus the reflected voltage.
    pub drain_voltage: DrainVoltageShape,
    /// Bulk capacitance of the design.
    pub bulk_capacitance: Capacitance,
    /// Lowest bulk voltage at full power (bulk valley at low line, full load).
    pub minimum_input_voltage: ElectricPotential,
    /// Converter input power at low line, full load.
    pub input_power: Power,
    /// Highest line voltage of the design (RMS for AC input).
    pub maximum_line_voltage: ElectricPotential,
}

fn corner_of<'a>(design: &'a FlybackDesign, name: &str) -> Result<&'a OperatingPoint> {
    design.corner(name).ok_or_else(|| {
        let names: Vec<&str> = design.corners.iter().map(|c| c.corner.as_str()).collect();
        Error::unknown(format!(
            "`corner` = \"{name}\" is not a corner of this design; expected one of {}",
            names.join(", ")
        ))
    })
}

/// Reads the converter side of the input filter design from one corner of a flyback design.
///
/// - Primary current: a CCM corner gives the trapezoid from the corner's valley current to its
///   peak over the duty cycle D; a DCM or boundary corner gives the triangle from zero to the
///   peak over D (the demagnetising and idle fractions do not change the primary current).
/// - Drain voltage: amplitude V_bulk,peak + V_r (the corner's bulk peak and the design's
///   reflected voltage; the leakage spike and DCM ringing are left out, as in
///   [`DrainVoltageShape`]), duty D, rise and fall time `drain_rise_time` each (see
///   [`DEFAULT_DRAIN_RISE_TIME_S`]), shortened when rise + fall would take more than
///   [`MAX_EDGE_SHARE_OF_OFF_TIME`] of the off-time (1 − D)·T.
/// - Bulk capacitance from the design; the lowest input voltage and the input power are the
///   low-line full-load corner's bulk valley and converter input power (for Middlebrook's
///   criterion, whichever corner the waveforms come from); the highest line voltage is the
///   largest line voltage over the corners.
///
/// Valid for a design with a bulk capacitor (AC input). Errors: an unknown corner name, a DC
/// input design (no bulk capacitor), a negative rise time.
/// Reference: the waveform shapes are the flyback relations of Erickson & Maksimović,
/// *Fundamentals of Power Electronics*, 3rd ed. (2020), ch. 6 (flyback) and ch. 5 (DCM).
pub fn emi_source_from_flyback(
    design: &FlybackDesign,
    corner: &str,
    drain_rise_time: Time,
) -> Result<FlybackEmiSource> {
    let rise = non_negative("drain_rise_time", drain_rise_time)?.value;
    let op = corner_of(design, corner)?;
    let full = corner_of(design, "low_line_full_load")?;
    let bulk = design.bulk_capacitance.ok_or_else(|| {
        Error::invalid(
            "the flyback design has no bulk capacitor (DC input): the input filter design needs \
             `bulk_capacitance` (F); give the DC bus capacitance explicitly",
        )
    })?;
    let duty = op.duty_cycle;
    let fsw = design.switching_frequency.value;
    let primary_current = match op.mode {
        ConductionMode::Continuous => PrimaryCurrentShape::Continuous {
            valley: op.primary_current_valley,
            peak: op.primary_current_peak,
            duty,
        },
        ConductionMode::Discontinuous | ConductionMode::Boundary => {
            PrimaryCurrentShape::Discontinuous {
                peak: op.primary_current_peak,
                duty,
            }
        }
    };
    let off_time = (1.0 - duty).max(0.0) / fsw;
    let edge = rise.min(0.5 * MAX_EDGE_SHARE_OF_OFF_TIME * off_time);
    let drain_voltage = DrainVoltageShape {
        amplitude: op.bulk_peak_voltage + design.reflected_voltage,
        duty,
        rise_time: si(edge),
        fall_time: si(edge),
    };
    let maximum_line_voltage = design
        .corners
        .iter()
        .map(|c| c.line_voltage)
        .fold(full.line_voltage, |a, b| if b > a { b } else { a });
    let source = FlybackEmiSource {
        corner: op.corner.clone(),
        mode: op.mode,
        switching_frequency: design.switching_frequency,
        primary_current,
        drain_voltage,
        bulk_capacitance: bulk,
        minimum_input_voltage: full.bulk_valley_voltage,
        input_power: full.converter_input_power,
        maximum_line_voltage,
    };
    // The shapes check themselves (positive peak, 0 < D < 1, edges that fit).
    source.primary_current.waveform()?;
    source.drain_voltage.waveform(source.switching_frequency)?;
    Ok(source)
}

impl FlybackEmiSource {
    /// Writes the converter side into an input filter spec, keeping its filter choices
    /// (class, margin, stages, X and Y capacitance, bulk ESR/ESL, parasitic capacitance, line
    /// frequency, discharge requirement).
    pub fn apply_to(&self, spec: &mut InputFilterSpec) {
        spec.switching_frequency = self.switching_frequency;
        spec.primary_current = self.primary_current;
        spec.drain_voltage = self.drain_voltage;
        spec.bulk_capacitance = self.bulk_capacitance;
        spec.minimum_input_voltage = self.minimum_input_voltage;
        spec.input_power = self.input_power;
        spec.maximum_line_voltage = self.maximum_line_voltage;
    }

    /// Peak primary current of the shape.
    pub fn primary_current_peak(&self) -> ElectricCurrent {
        match self.primary_current {
            PrimaryCurrentShape::Continuous { peak, .. }
            | PrimaryCurrentShape::Discontinuous { peak, .. } => peak,
        }
    }

    /// Valley primary current of the shape (zero for DCM and boundary).
    pub fn primary_current_valley(&self) -> ElectricCurrent {
        match self.primary_current {
            PrimaryCurrentShape::Continuous { valley, .. } => valley,
            PrimaryCurrentShape::Discontinuous { .. } => si(0.0),
        }
    }

    /// Duty cycle of the shapes.
    pub fn duty(&self) -> f64 {
        self.drain_voltage.duty
    }
}

crate::serialize_as_record!(FlybackEmiSource);

impl Record for FlybackEmiSource {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("corner", self.corner.as_str()),
            Field::new(
                "conduction_mode",
                match self.mode {
                    ConductionMode::Continuous => "ccm",
                    _ => "dcm",
                },
            ),
            Field::quantity("switching_frequency", self.switching_frequency),
            Field::quantity("peak_current", self.primary_current_peak()),
            Field::quantity("valley_current", self.primary_current_valley()),
            Field::new("duty", self.duty()),
            Field::quantity("drain_voltage", self.drain_voltage.amplitude),
            Field::quantity("rise_time", self.drain_voltage.rise_time),
            Field::quantity("fall_time", self.drain_voltage.fall_time),
            Field::quantity("bulk_capacitance", self.bulk_capacitance),
            Field::quantity("minimum_input_voltage", self.minimum_input_voltage),
            Field::quantity("input_power", self.input_power),
            Field::quantity("maximum_line_voltage", self.maximum_line_voltage),
        ]
    }
}
