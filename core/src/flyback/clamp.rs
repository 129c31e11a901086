//! The primary clamp: leakage energy per cycle, RCD clamp resistor and capacitor, or a Zener
//! clamp, and the dissipation at each operating point.

use super::spec::ClampKind;
use crate::error::{Error, Result};
use crate::passives::{preferred_at_or_above, preferred_at_or_below, ESeries};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, positive};
use crate::units::{
    si, Capacitance, ElectricCurrent, ElectricPotential, ElectricalResistance, Energy, Frequency,
    Inductance, Power, Quantity,
};

/// Relative ripple allowed on the RCD clamp capacitor's voltage (common practice, no
/// published source).
pub const CLAMP_CAPACITOR_RIPPLE: f64 = 0.1;

/// The clamp as built, sized at the worst case (highest current limit, high line).
///
/// RCD: the resistor for the wanted clamp voltage, R = V_c²/P, is rounded down to the E24
/// series (a lower resistor holds a lower clamp voltage) and the capacitor for the ripple
/// [`CLAMP_CAPACITOR_RIPPLE`], C = 1/(r·R·f), rounded up to E12; the clamp voltage is then
/// the one the chosen resistor holds, V_c·(V_c − V_r) = R·½·L_lk·I_pk²·f (Billings & Morey,
/// *Switchmode Power Supply Handbook*, 3rd ed. (2011), flyback snubber section, value
/// recalled from memory), and the capacitor's ripple ΔV = V_c/(R·C·f). Zener: the nominal
/// voltage V_r + overshoot; its highest voltage V_z·(1 + tol)·(1 + rise hot).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ClampDesign {
    /// RCD or Zener.
    pub kind: ClampKind,
    /// Clamp voltage at the worst case: RCD the average the chosen resistor holds, Zener the
    /// nominal voltage.
    pub clamp_voltage: ElectricPotential,
    /// Highest clamp voltage at the worst case: RCD the top of the capacitor ripple,
    /// V_c + ΔV/2; Zener V_z·(1 + tolerance)·(1 + rise hot). The drain rule uses this.
    pub clamp_voltage_max: ElectricPotential,
    /// RCD capacitor ripple, peak to peak, at the worst case, V_c/(R·C·f) (zero for a Zener).
    pub ripple_voltage_pp: ElectricPotential,
    /// The least dissipation of an RCD clamp while the converter switches: the reflected
    /// voltage recharges the capacitor to at least V_r every cycle, so the resistor takes at
    /// least V_r²/R, at no load too (common practice, no published source). Zero for a Zener
    /// (it conducts only above its voltage).
    pub standby_power: Power,
    /// Leakage energy per cycle at the worst-case peak current, ½·L_lk·I_pk².
    pub leakage_energy: Energy,
    /// Clamp dissipation at the worst case.
    pub power: Power,
    /// RCD resistor (None for a Zener clamp or no leakage).
    pub resistor: Option<ElectricalResistance>,
    /// RCD capacitor for the ripple [`CLAMP_CAPACITOR_RIPPLE`] (None for a Zener clamp).
    pub capacitor: Option<Capacitance>,
    /// The Zener's spread (unused for an RCD clamp).
    pub(crate) zener: ZenerSpread,
}

/// Power the clamp absorbs: the leakage energy each cycle, plus the energy the input and the
/// reflected voltage push through while the leakage current falls.
///
/// Formula: P = ½·L_lk·I_pk²·f·V_c/(V_c − V_r).
/// Assumes the clamp voltage is steady over a cycle and the leakage current falls linearly.
/// Valid for V_c > V_r. Reference: the clamp-loss relation of flyback design texts, e.g.
/// Basso, *Switch-Mode Power Supplies*, 2nd ed. (2014), flyback chapter (value recalled from memory).
pub fn clamp_dissipation(
    leakage_inductance: Inductance,
    peak_current: ElectricCurrent,
    clamp_voltage: ElectricPotential,
    reflected_voltage: ElectricPotential,
    switching_frequency: Frequency,
) -> Result<Power> {
    let l = non_negative("leakage_inductance", leakage_inductance)?.value;
    let i = non_negative("peak_current", peak_current)?.value;
    let vc = positive("clamp_voltage", clamp_voltage)?.value;
    let vr = positive("reflected_voltage", reflected_voltage)?.value;
    let f = positive("switching_frequency", switching_frequency)?.value;
    if vc <= vr {
        return Err(Error::invalid(format!(
            "`clamp_voltage` ({}) must be above `reflected_voltage` ({})",
            Quantity::from_typed(clamp_voltage),
            Quantity::from_typed(reflected_voltage)
        )));
    }
    Ok(si(0.5 * l * i * i * f * vc / (vc - vr)))
}

/// How a Zener clamp's voltage spreads: relative tolerance and relative rise from 25 °C to
/// its hot junction (temperature coefficient × temperature rise).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct ZenerSpread {
    pub tolerance: f64,
    pub rise_hot: f64,
}

impl ZenerSpread {
    /// Highest over nominal voltage: (1 + tol)·(1 + rise).
    pub fn high(&self) -> f64 {
        (1.0 + self.tolerance) * (1.0 + self.rise_hot.max(0.0))
    }
    /// Lowest over nominal voltage: (1 − tol)·(1 + min(rise, 0)).
    pub fn low(&self) -> f64 {
        (1.0 - self.tolerance) * (1.0 + self.rise_hot.min(0.0))
    }
}

/// Sizes the clamp at the worst-case peak current (plain SI numbers; inputs validated).
/// `preferred`: round the RCD parts to preferred values (the clamp as built); without it the
/// exact parts (used while the design iterates, so that rounding cannot make it oscillate).
#[allow(clippy::too_many_arguments)]
pub(crate) fn design_clamp(
    kind: ClampKind,
    vr: f64,
    overshoot: f64,
    llk: f64,
    ipk: f64,
    f: f64,
    zener: ZenerSpread,
    preferred: bool,
) -> Result<ClampDesign> {
    let vc = vr + overshoot;
    let e = 0.5 * llk * ipk * ipk;
    let p = e * f * vc / (vc - vr);
    let mut c = match kind {
        ClampKind::Rcd if p > 0.0 => {
            let mut r = vc * vc / p;
            let mut cap = 1.0 / (CLAMP_CAPACITOR_RIPPLE * r * f);
            if preferred {
                r = preferred_at_or_below::<ElectricalResistance>(si(r), ESeries::E24)?.value;
                cap = preferred_at_or_above::<Capacitance>(si(cap), ESeries::E12)?.value;
            }
            ClampDesign {
                kind,
                clamp_voltage: si(vc),
                clamp_voltage_max: si(vc),
                ripple_voltage_pp: si(0.0),
                standby_power: si(vr * vr / r),
                leakage_energy: si(e),
                power: si(p),
                resistor: Some(si(r)),
                capacitor: Some(si(cap)),
                zener,
            }
        }
        _ => ClampDesign {
            kind,
            clamp_voltage: si(vc),
            clamp_voltage_max: si(vc),
            ripple_voltage_pp: si(0.0),
            standby_power: si(0.0),
            leakage_energy: si(e),
            power: si(p),
            resistor: None,
            capacitor: None,
            zener,
        },
    };
    // the worst case with the parts as chosen
    let at = clamp_at(&c, vr, llk, ipk, f);
    c.clamp_voltage = si(at.voltage);
    c.clamp_voltage_max = si(at.voltage_max);
    c.ripple_voltage_pp = si(at.ripple_pp);
    c.power = si(at.power);
    Ok(c)
}

/// The clamp at one operating point (SI numbers).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct ClampPoint {
    /// Average clamp voltage (Zener: nominal).
    pub voltage: f64,
    /// Highest clamp voltage (RCD: top of the ripple; Zener: highest of tolerance and heat).
    pub voltage_max: f64,
    /// RCD capacitor ripple, peak to peak.
    pub ripple_pp: f64,
    /// Dissipation.
    pub power: f64,
}

/// Clamp voltage and dissipation at an operating point with peak current `ipk`.
///
/// RCD: the resistor sets V_c·(V_c − V_r) = R·E·f, so V_c = (V_r + √(V_r² + 4·R·E·f))/2,
/// P = V_c²/R and the ripple ΔV = V_c/(R·C·f) (the capacitor discharges through R over a
/// period). Zener: V_c nominal, P = E·f·V_c/(V_c − V_r) at the lowest voltage of its spread
/// (the most loss), the highest voltage of the spread for the drain.
pub(crate) fn clamp_at(c: &ClampDesign, vr: f64, llk: f64, ipk: f64, f: f64) -> ClampPoint {
    let e = 0.5 * llk * ipk * ipk;
    match (c.kind, c.resistor) {
        (ClampKind::Rcd, Some(r)) => {
            let r = r.value;
            let vc = 0.5 * (vr + (vr * vr + 4.0 * r * e * f).sqrt());
            let ripple = match c.capacitor {
                Some(cap) => vc / (r * cap.value * f),
                None => 0.0,
            };
            ClampPoint {
                voltage: vc,
                voltage_max: vc + ripple / 2.0,
                ripple_pp: ripple,
                power: vc * vc / r,
            }
        }
        (ClampKind::Rcd, None) => ClampPoint {
            voltage: vr,
            voltage_max: vr,
            ripple_pp: 0.0,
            power: 0.0,
        },
        (ClampKind::Zener, _) => {
            let nominal = c.zener_nominal();
            let low = (nominal * c.zener.low()).max(vr * (1.0 + 1e-9));
            ClampPoint {
                voltage: nominal,
                voltage_max: nominal * c.zener.high(),
                ripple_pp: 0.0,
                power: e * f * low / (low - vr),
            }
        }
    }
}

crate::serialize_as_record!(ClampDesign);

impl ClampDesign {
    /// The Zener's nominal voltage (the design clamp voltage).
    fn zener_nominal(&self) -> f64 {
        self.clamp_voltage.value
    }
    /// The same parts (RCD resistor and capacitor, or Zener) at another worst-case peak
    /// current: the worst-case voltage, ripple, energy and power recomputed.
    pub(crate) fn with_parts(&self, vr: f64, llk: f64, ipk: f64, f: f64) -> ClampDesign {
        let mut c = *self;
        let at = clamp_at(&c, vr, llk, ipk, f);
        c.leakage_energy = si(0.5 * llk * ipk * ipk);
        c.clamp_voltage = si(at.voltage);
        c.clamp_voltage_max = si(at.voltage_max);
        c.ripple_voltage_pp = si(at.ripple_pp);
        c.power = si(at.power);
        if let Some(r) = c.resistor {
            c.standby_power = si(vr * vr / r.value);
        }
        c
    }
}

impl Record for ClampDesign {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::new(
                "clamp_kind",
                match self.kind {
                    ClampKind::Rcd => "rcd",
                    ClampKind::Zener => "zener",
                },
            ),
            Field::quantity("clamp_voltage", self.clamp_voltage),
            Field::quantity("clamp_voltage_max", self.clamp_voltage_max),
            Field::quantity("clamp_leakage_energy", self.leakage_energy),
            Field::quantity("clamp_power", self.power),
        ];
        if self.kind == ClampKind::Rcd {
            v.push(Field::quantity(
                "clamp_ripple_voltage_pp",
                self.ripple_voltage_pp,
            ));
            v.push(Field::quantity("clamp_standby_power", self.standby_power));
        }
        if let Some(r) = self.resistor {
            v.push(Field::quantity("clamp_resistor", r));
        }
        if let Some(c) = self.capacitor {
            v.push(Field::quantity("clamp_capacitor", c));
        }
        v
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const NO_SPREAD: ZenerSpread = ZenerSpread {
        tolerance: 0.0,
        rise_hot: 0.0,
    };

    #[test]
    fn rcd_resistor_holds_the_design_clamp_voltage_at_the_worst_case() {
        let (vr, over, llk, ipk, f) = (100.0, 50.0, 30e-6, 0.8, 65e3);
        let c = design_clamp(ClampKind::Rcd, vr, over, llk, ipk, f, NO_SPREAD, false).unwrap();
        let at = clamp_at(&c, vr, llk, ipk, f);
        assert!((at.voltage - 150.0).abs() < 1e-9, "{}", at.voltage);
        assert!((at.power - c.power.value).abs() < 1e-12);
        // the ripple is the sizing ratio: ΔV = V_c/(R·C·f) = 0.1·V_c
        assert!((at.ripple_pp - CLAMP_CAPACITOR_RIPPLE * 150.0).abs() < 1e-9);
        // below the worst case the RCD clamp voltage falls, but never below V_r
        let low = clamp_at(&c, vr, llk, ipk / 2.0, f);
        assert!(low.voltage < at.voltage && low.voltage > vr && low.power < at.power);
        // the standby floor V_r²/R
        let r = c.resistor.unwrap().value;
        assert!((c.standby_power.value - vr * vr / r).abs() < 1e-12);
        assert!(low.power > c.standby_power.value);
        // the Zener holds its voltage
        let z = design_clamp(ClampKind::Zener, vr, over, llk, ipk, f, NO_SPREAD, false).unwrap();
        assert_eq!(clamp_at(&z, vr, llk, ipk / 2.0, f).voltage, 150.0);
        // public formula agrees with the sizing (hand check of the same formula)
        let p_pub = clamp_dissipation(si(llk), si(ipk), si(150.0), si(vr), si(f)).unwrap();
        assert!((p_pub.value - c.power.value).abs() < 1e-12);
        assert!(clamp_dissipation(si(llk), si(ipk), si(90.0), si(vr), si(f)).is_err());
    }
}
