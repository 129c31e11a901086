//! Junction temperature of the switch and of each output rectifier at the worst corner, from
//! their loss, junction-to-case and case-to-ambient (heat sink) thermal resistances, and the
//! heat sink a target junction temperature needs.

use super::operating_point::OperatingPoint;
use super::spec::FlybackSpec;
use crate::report::{Field, Record};
use crate::units::{si, Power, ThermalResistance, ThermodynamicTemperature};

/// The thermal path of one semiconductor: junction to case, case to ambient (the heat sink
/// with its interface, or the package in free air), and the junction temperature allowed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ThermalPath {
    /// Junction-to-case thermal resistance (the part's).
    pub junction_to_case: ThermalResistance,
    /// Case-to-ambient thermal resistance: heat sink and interface, or the package alone.
    pub case_to_ambient: ThermalResistance,
    /// Highest junction temperature allowed (a house limit below the part's maximum).
    pub max_junction_temperature: ThermodynamicTemperature,
}

/// One semiconductor's junction temperature at the corner where it dissipates most.
///
/// Formula: T_j = T_a + P·(R_θjc + R_θca); the heat sink for T_j,max is
/// R_θca = (T_j,max − T_a)/P − R_θjc (none when that is not positive: no heat sink can hold
/// it). Assumes steady state and a loss independent of temperature (the switch's on-
/// resistance is already taken hot by `on_resistance_hot_factor`). Reference: the series
/// thermal-resistance network, e.g. Hart, *Power Electronics* (2011), heat-sink section;
/// Erickson & Maksimović, 3rd ed. (2020), ch. 4 (switch loss).
#[derive(Clone, Debug, PartialEq)]
pub struct JunctionTemperature {
    /// `switch`, or `rectifier_1`, `rectifier_2`, …
    pub part: String,
    /// The corner with the highest loss.
    pub corner: String,
    /// Loss there: switch conduction + capacitive + overlap; rectifier V_f·I_o.
    pub loss: Power,
    /// Junction temperature there.
    pub junction_temperature: ThermodynamicTemperature,
    /// The limit it is checked against.
    pub max_junction_temperature: ThermodynamicTemperature,
    /// Case-to-ambient thermal resistance that holds the limit; None when even an ideal heat
    /// sink cannot (the junction-to-case drop alone exceeds it).
    pub case_to_ambient_needed: Option<ThermalResistance>,
    /// Junction temperature at the current-limit corners (an overload held just below the
    /// limit), reported but not ruled: a thermal shutdown or the auto-restart must cover it.
    pub junction_temperature_at_limit: ThermodynamicTemperature,
}

impl Record for JunctionTemperature {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::new("part", self.part.as_str()),
            Field::new("corner", self.corner.as_str()),
            Field::quantity("loss", self.loss),
            Field::quantity("junction_temperature", self.junction_temperature),
            Field::quantity("max_junction_temperature", self.max_junction_temperature),
        ];
        if let Some(r) = self.case_to_ambient_needed {
            v.push(Field::quantity("case_to_ambient_needed", r));
        }
        v.push(Field::quantity(
            "junction_temperature_at_limit",
            self.junction_temperature_at_limit,
        ));
        v
    }
}

fn junction(
    part: String,
    all: &[OperatingPoint],
    loss_of: &dyn Fn(&OperatingPoint) -> f64,
    path: &ThermalPath,
    ambient: f64,
) -> JunctionTemperature {
    // the line and load corners set the rule; the current-limit ones are reported
    let (corners, limit) = all.split_at(all.len().min(4));
    let at_limit = limit.iter().map(loss_of).fold(0.0, f64::max);
    let (corner, p) = corners
        .iter()
        .map(|c| (c.corner.as_str(), loss_of(c)))
        .fold(
            ("", f64::NEG_INFINITY),
            |a, b| if b.1 > a.1 { b } else { a },
        );
    let p = p.max(0.0);
    let rjc = path.junction_to_case.value;
    let tmax = path.max_junction_temperature.value;
    let needed = if p > 0.0 {
        let r = (tmax - ambient) / p - rjc;
        (r > 0.0).then(|| si(r))
    } else {
        None
    };
    JunctionTemperature {
        part,
        corner: corner.to_string(),
        loss: si(p),
        junction_temperature: si(ambient + p * (rjc + path.case_to_ambient.value)),
        max_junction_temperature: path.max_junction_temperature,
        case_to_ambient_needed: needed,
        junction_temperature_at_limit: si(ambient + at_limit * (rjc + path.case_to_ambient.value)),
    }
}

/// The switch and every output rectifier at their worst line and load corner (the first
/// four corners), with the current-limit corners reported beside.
pub(crate) fn junction_temperatures(
    spec: &FlybackSpec,
    corners: &[OperatingPoint],
) -> Vec<JunctionTemperature> {
    let ta = spec.ambient_temperature.value;
    let mut out = vec![junction(
        "switch".to_string(),
        corners,
        &|c: &OperatingPoint| {
            c.losses.switch_conduction.value
                + c.losses.switch_capacitive.value
                + c.losses.switch_overlap.value
        },
        &spec.switch_thermal,
        ta,
    )];
    for (k, o) in spec.outputs.iter().enumerate() {
        let vf = o.rectifier_drop.value;
        out.push(junction(
            format!("rectifier_{}", k + 1),
            corners,
            &|c: &OperatingPoint| vf * c.secondaries[k].current_avg.value,
            &spec.rectifier_thermal,
            ta,
        ));
    }
    out
}
