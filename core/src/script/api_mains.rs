//! Script API of the mains input: the bulk capacitor's valley, ripple current and hold-up time.

use super::convert::{dynamic_to_typed, lift, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::record::ScriptRecord;
use super::spec::Spec;
use super::{def, Api};
use crate::mains::{bulk_capacitance_for_valley, bulk_capacitor, hold_up_time, BulkCapacitorSpec};
use crate::units::Quantity;
use rhai::{Dynamic, Map};

use ParamKind::Quantity as Q;

static BULK: FunctionDoc = FunctionDoc {
    name: "bulk_capacitor",
    domain: Domain::Mains,
    summary: "Bulk capacitor behind a bridge: peak and valley voltage by energy balance with the conduction time, ripple current, µF per watt.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("line_voltage", Q("V"), "line voltage, RMS"),
        ParamDoc::with_default("line_frequency", Q("Hz"), "50 Hz", "line frequency"),
        ParamDoc::required("input_power", Q("W"), "power the converter draws"),
        ParamDoc::required("capacitance", Q("F"), "bulk capacitance"),
        ParamDoc::with_default("bridge_diode_drop", Q("V"), "1 V", "drop of one bridge diode"),
    ],
    returns: "record: peak_voltage, valley_voltage, ripple_voltage_pp, average_voltage, conduction_time, bridge currents, ripple_current_rms, microfarads_per_watt",
    example: "bulk_capacitor(#{line_voltage: 90 * V, input_power: 20 * W, capacitance: 47 * uF})",
};
static SIZE: FunctionDoc = FunctionDoc {
    name: "bulk_capacitance_for_valley",
    domain: Domain::Mains,
    summary: "The bulk capacitance that holds the valley at a target: C = 2·P·(1/(2f) − t_c)/(V_pk² − V_min²).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("line_voltage", Q("V"), "line voltage, RMS"),
        ParamDoc::with_default("line_frequency", Q("Hz"), "50 Hz", "line frequency"),
        ParamDoc::required("input_power", Q("W"), "power the converter draws"),
        ParamDoc::required("valley_voltage", Q("V"), "wanted valley"),
        ParamDoc::with_default("bridge_diode_drop", Q("V"), "1 V", "drop of one bridge diode"),
    ],
    returns: "F",
    example: "bulk_capacitance_for_valley(#{line_voltage: 90 * V, input_power: 20 * W, valley_voltage: 80 * V})",
};
static HOLD: FunctionDoc = FunctionDoc {
    name: "hold_up_time",
    domain: Domain::Mains,
    summary: "Time a capacitor feeds a constant power from one voltage down to another: t = C·(V₀² − V₁²)/(2·P).",
    params: &[
        ParamDoc::required("capacitance", Q("F"), "capacitance"),
        ParamDoc::required("start_voltage", Q("V"), "voltage when the line drops"),
        ParamDoc::required("end_voltage", Q("V"), "lowest voltage the converter works at"),
        ParamDoc::required("power", Q("W"), "power drawn"),
    ],
    keys: &[],
    returns: "s",
    example: "hold_up_time(47 * uF, 100 * V, 70 * V, 20 * W)",
};

pub(crate) fn register(api: &mut Api) {
    def!(api, &BULK, |m: Map| -> ScriptResult<ScriptRecord> {
        let s = lift(Spec::new(&BULK, &m))?;
        let spec = lift((|| {
            Ok(BulkCapacitorSpec {
                line_voltage_rms: s.quantity("line_voltage")?,
                line_frequency: s.quantity("line_frequency")?,
                input_power: s.quantity("input_power")?,
                capacitance: s.quantity("capacitance")?,
                bridge_diode_drop: s.quantity("bridge_diode_drop")?,
            })
        })())?;
        let b = lift(bulk_capacitor(&spec).map_err(|e| e.context("bulk_capacitor")))?;
        Ok(ScriptRecord::from_record("bulk_capacitor", &b))
    });
    def!(api, &SIZE, |m: Map| -> ScriptResult<Quantity> {
        let s = lift(Spec::new(&SIZE, &m))?;
        let c = lift((|| {
            bulk_capacitance_for_valley(
                s.quantity("line_voltage")?,
                s.quantity("line_frequency")?,
                s.quantity("input_power")?,
                s.quantity("valley_voltage")?,
                s.quantity("bridge_diode_drop")?,
            )
        })())?;
        Ok(Quantity::from_typed(c))
    });
    def!(api, &HOLD, |c: Dynamic,
                      v0: Dynamic,
                      v1: Dynamic,
                      p: Dynamic|
     -> ScriptResult<Quantity> {
        let t = lift((|| {
            hold_up_time(
                dynamic_to_typed(&c, "capacitance")?,
                dynamic_to_typed(&v0, "start_voltage")?,
                dynamic_to_typed(&v1, "end_voltage")?,
                dynamic_to_typed(&p, "power")?,
            )
        })())?;
        Ok(Quantity::from_typed(t))
    });
}
