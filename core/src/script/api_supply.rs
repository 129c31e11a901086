//! Script API of the whole supply: `supply_design(#{power_stage: #{…}, transformer: #{…}, …})`.
//! Its keys, defaults and help are generated from the native specification's one definition
//! (`supply::SUPPLY_SECTIONS`); the map is converted to JSON and read by the same serde code
//! that reads TOML and JSON files.

use super::convert::{lift, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDefault, ParamDoc, ParamKind};
use super::record::ScriptRecord;
use super::{def, Api};
use crate::error::{Error, Result};
use crate::supply::{supply_design, KeyDefault, KeyKind, SupplySpec, SUPPLY_SECTIONS};
use crate::units::{Decibel, Quantity};
use rhai::{Dynamic, Map};
use serde_json::Value as Json;
use std::sync::LazyLock;

fn param_kind(k: KeyKind) -> ParamKind {
    match k {
        KeyKind::Quantity(u) => ParamKind::Quantity(u),
        KeyKind::Decibel => ParamKind::Any,
        KeyKind::Number => ParamKind::Number,
        KeyKind::Integer => ParamKind::Integer,
        KeyKind::Text => ParamKind::Text,
        KeyKind::Flag => ParamKind::Flag,
        KeyKind::RuleLimits => ParamKind::Map,
    }
}

/// The keys of `supply_design`: `name`, then `section.key` for every key of every section,
/// generated from the native specification.
pub(crate) fn supply_keys() -> Vec<ParamDoc> {
    let mut out = vec![ParamDoc::with_default(
        "name",
        ParamKind::Text,
        "supply",
        "name of the supply (report title)",
    )];
    for (section, _, keys) in SUPPLY_SECTIONS {
        for k in keys.iter() {
            let name: &'static str = Box::leak(format!("{section}.{}", k.name).into_boxed_str());
            out.push(ParamDoc {
                name,
                kind: param_kind(k.kind),
                default: match k.default {
                    KeyDefault::Required => ParamDefault::Required,
                    KeyDefault::Optional => ParamDefault::Optional,
                    KeyDefault::Value(v) => ParamDefault::Value(v),
                },
                summary: k.help,
            });
        }
    }
    out
}

const SPEC_PARAM: &[ParamDoc] = &[ParamDoc::required(
    "spec",
    ParamKind::Map,
    "one map per section, see keys",
)];

static DESIGN: LazyLock<FunctionDoc> = LazyLock::new(|| {
    FunctionDoc {
    name: "supply_design",
    domain: Domain::Flyback,
    summary: "The whole supply from one specification: power stage, transformer (its computed copper + core loss and leakage fed back into the power stage until they agree within 0.1 % of output power and 1 %), regulation and loop, EMI input filter at the worse line corner, primary–secondary barrier; every check of every part with its worst corner. The map has one map per section (power_stage, transformer, regulation, emi_filter, isolation) with the keys below; the same names are read from TOML and JSON by `gapwise design`.",
    params: SPEC_PARAM,
    keys: Box::leak(supply_keys().into_boxed_slice()),
    returns: "map: summary (record), checks (table with part and worst_corner), consistency (table, one row per pass)",
    example: "supply_design(#{power_stage: #{output_voltage: 12 * V, output_current: 1.25 * A}, transformer: #{core: \"EF25\"}}).summary",
}
});

/// A script value as JSON for the specification reader: quantities as `{value, dimension}`
/// in coherent SI, dB values as text, maps and arrays recursively.
pub(crate) fn dynamic_to_json(d: &Dynamic, key: &str) -> Result<Json> {
    if d.is_unit() {
        return Ok(Json::Null);
    }
    if let Ok(i) = d.as_int() {
        return Ok(Json::from(i));
    }
    if let Ok(x) = d.as_float() {
        return Ok(serde_json::Number::from_f64(x)
            .map(Json::Number)
            .unwrap_or(Json::Null));
    }
    if let Ok(b) = d.as_bool() {
        return Ok(Json::Bool(b));
    }
    if let Some(s) = d.read_lock::<rhai::ImmutableString>() {
        return Ok(Json::String(s.to_string()));
    }
    if let Some(q) = d.read_lock::<Quantity>() {
        if !q.value().is_finite() {
            return Err(Error::invalid(format!(
                "`{key}` must be finite, got {}",
                *q
            )));
        }
        return Ok(serde_json::json!({
            "value": q.value(),
            "dimension": q.dimension(),
            "absolute_temperature": q.is_absolute_temperature(),
        }));
    }
    if let Some(db) = d.read_lock::<Decibel>() {
        return Ok(Json::String(format!(
            "{} {}",
            db.value,
            db.reference.symbol()
        )));
    }
    if let Some(m) = d.read_lock::<Map>() {
        let mut out = serde_json::Map::new();
        for (k, v) in m.iter() {
            out.insert(k.to_string(), dynamic_to_json(v, &format!("{key}.{k}"))?);
        }
        return Ok(Json::Object(out));
    }
    if let Some(a) = d.read_lock::<rhai::Array>() {
        return a
            .iter()
            .enumerate()
            .map(|(i, v)| dynamic_to_json(v, &format!("{key}[{i}]")))
            .collect::<Result<Vec<_>>>()
            .map(Json::Array);
    }
    Err(Error::invalid(format!(
        "`{key}` has a value of type {} that a specification cannot hold",
        d.type_name()
    )))
}

fn design(m: &Map) -> Result<Map> {
    let mut j = serde_json::Map::new();
    for (k, v) in m.iter() {
        j.insert(k.to_string(), dynamic_to_json(v, k)?);
    }
    let spec = SupplySpec::from_json(Json::Object(j))?;
    let s = supply_design(&spec)?;
    let mut out = Map::new();
    out.insert(
        "summary".into(),
        Dynamic::from(ScriptRecord::from_record("supply_design", &s.summary())),
    );
    out.insert("checks".into(), Dynamic::from(s.check_table()));
    out.insert("consistency".into(), Dynamic::from(s.consistency_table()));
    out.insert(
        "worst_status".into(),
        Dynamic::from(s.worst_status().to_string()),
    );
    out.insert(
        "failed_checks".into(),
        Dynamic::from_int(s.failed_checks() as i64),
    );
    Ok(out)
}

pub(crate) fn register(api: &mut Api) {
    def!(api, &DESIGN, |m: Map| -> ScriptResult<Map> {
        lift(design(&m))
    });
}
