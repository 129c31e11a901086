//! The 50 Ω / 50 µH line impedance stabilisation network (artificial mains network) of
//! CISPR 16-1-2 as a complex impedance against frequency.

use super::complex::Complex;
use super::limits::{conducted_band_end, conducted_band_start};
use crate::error::Result;
use crate::report::{Field, Record};
use crate::units::validate::within;
use crate::units::{si, ElectricalResistance, Frequency};
use std::f64::consts::PI;

/// Series inductance from the mains side to the equipment terminal, 50 µH.
pub const LISN_INDUCTANCE: f64 = 50e-6;
/// Capacitance from the mains side of the inductor to the reference earth, 1 µF
/// (value recalled from memory).
pub const LISN_MAINS_CAPACITANCE: f64 = 1e-6;
/// Coupling capacitance from the equipment terminal to the receiver port, 0.1 µF
/// (value recalled from memory).
pub const LISN_COUPLING_CAPACITANCE: f64 = 0.1e-6;
/// Input resistance of the measuring receiver, 50 Ω.
pub const LISN_RECEIVER_RESISTANCE: f64 = 50.0;

/// The impedance of one line of the network seen from the equipment terminal, and the
/// fraction of the terminal voltage that reaches the receiver.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LisnImpedance {
    /// Frequency.
    pub frequency: Frequency,
    /// Real part of the impedance.
    pub resistance: ElectricalResistance,
    /// Imaginary part of the impedance (positive: inductive).
    pub reactance: ElectricalResistance,
    /// Magnitude |Z|.
    pub magnitude: ElectricalResistance,
    /// Phase of Z in degrees.
    pub phase_degrees: f64,
    /// |V_receiver / V_terminal|: the share of the terminal voltage across the 50 Ω receiver.
    pub receiver_fraction: f64,
}

crate::serialize_as_record!(LisnImpedance);

impl Record for LisnImpedance {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("frequency", self.frequency),
            Field::quantity("resistance", self.resistance),
            Field::quantity("reactance", self.reactance),
            Field::quantity("magnitude", self.magnitude),
            Field::new("phase_degrees", self.phase_degrees),
            Field::new("receiver_fraction", self.receiver_fraction),
        ]
    }
}

/// Complex impedance of one line and the complex terminal-to-receiver ratio at ω (rad/s).
/// The mains beyond the network's mains-side capacitor is taken as a short circuit.
pub(crate) fn lisn_circuit(w: f64) -> (Complex, Complex) {
    let mains_branch =
        Complex::inductor(LISN_INDUCTANCE, w) + Complex::capacitor(LISN_MAINS_CAPACITANCE, w);
    let coupling = Complex::capacitor(LISN_COUPLING_CAPACITANCE, w);
    let receiver = Complex::real(LISN_RECEIVER_RESISTANCE);
    let receiver_branch = coupling + receiver;
    let z = mains_branch.parallel(receiver_branch);
    (z, receiver / receiver_branch)
}

/// The impedance of one line of the 50 Ω / 50 µH network at a frequency.
///
/// Circuit: from the equipment terminal, a 50 µH inductor to a 1 µF capacitor to earth (the
/// mains beyond it a short), in parallel with a 0.1 µF coupling capacitor in series with the
/// 50 Ω receiver:
/// Z = (jωL + 1/(jωC_mains)) ∥ (1/(jωC_coupling) + 50 Ω).
/// Close to the nominal 50 Ω ∥ jω·50 µH above 150 kHz.
/// Valid range: 150 kHz … 30 MHz (the band this network is specified for).
/// Reference: CISPR 16-1-2 (50 Ω / 50 µH artificial mains network; capacitor values recalled
/// from memory).
pub fn lisn_impedance(frequency: Frequency) -> Result<LisnImpedance> {
    let f = within(
        "frequency",
        frequency,
        conducted_band_start(),
        conducted_band_end(),
    )?
    .value;
    let (z, h) = lisn_circuit(2.0 * PI * f);
    Ok(LisnImpedance {
        frequency,
        resistance: si(z.re),
        reactance: si(z.im),
        magnitude: si(z.abs()),
        phase_degrees: z.arg().to_degrees(),
        receiver_fraction: h.abs(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tends_to_fifty_ohms() {
        // at 30 MHz the 50 µH branch is ~9.4 kΩ: |Z| ≈ 50 Ω (circuit above)
        let z = lisn_impedance(si(30e6)).unwrap();
        assert!((z.magnitude.value - 50.0).abs() < 0.5);
        assert!(lisn_impedance(si(100e3)).is_err());
    }
}
