//! The scripting layer: one sandboxed Rhai engine with the gapwise functions, unit constants,
//! help metadata, object-map specs, families and rules. Domain modules know nothing of it.
//!
//! Each `api_*` file registers one domain; every function is registered together with its
//! [`FunctionDoc`], so the prompt's help, completion and the README reference share one source.

mod api_design_flow;
mod api_emi;
mod api_family;
mod api_feedback;
mod api_flyback;
mod api_magnetics;
mod api_mains;
mod api_passives;
mod api_rules;
mod api_safety;
mod api_supply;
mod api_units;
pub mod convert;
pub mod docs;
mod host;
pub mod key_order;
pub mod memory;
mod recipe;
mod record;
pub mod spec;
pub mod suggest;

pub use docs::{Domain, FunctionDoc, ParamDefault, ParamDoc, ParamKind};
pub use host::{
    script_stack_bytes, EngineLimits, OutputText, PrintFn, ProgressFn, ScriptError, ScriptHost,
    MAX_CALL_DEPTH, MAX_MEMORY_MIB, MAX_SCRIPT_STACK_BYTES, SCRIPT_STACK_BYTES,
};
pub use recipe::{value_kind, RecipeParam};
pub use record::ScriptRecord;
pub use spec::Spec;

use rhai::Engine;
use std::sync::Arc;

/// Registers a documented function under the name in its doc: `def!(api, &DOC, closure)`.
macro_rules! def {
    ($api:ident, $doc:expr, $f:expr $(,)?) => {{
        let doc: &'static $crate::script::docs::FunctionDoc = $doc;
        $api.add_doc(doc);
        $api.engine.register_fn(doc.name, $f);
    }};
}
/// Registers another signature of an already documented function.
macro_rules! overload {
    ($api:ident, $name:expr, $f:expr $(,)?) => {{
        let name: &'static str = $name;
        $api.check_documented(name);
        $api.engine.register_fn(name, $f);
    }};
}
pub(crate) use {def, overload};

/// Registers functions together with their help.
pub(crate) struct Api<'e> {
    pub(crate) engine: &'e mut Engine,
    docs: &'e mut Vec<&'static FunctionDoc>,
}

impl Api<'_> {
    pub(crate) fn add_doc(&mut self, doc: &'static FunctionDoc) {
        if !self.docs.iter().any(|d| d.name == doc.name) {
            self.docs.push(doc);
        }
    }
    pub(crate) fn check_documented(&self, name: &str) {
        debug_assert!(
            self.docs.iter().any(|d| d.name == name),
            "overload of undocumented function {name}"
        );
    }
}

/// Names that read as properties of a script value (`value.name`): record fields, map keys,
/// a flyback design's summary fields. The prompt completes with them.
pub fn property_names(value: &rhai::Dynamic) -> Vec<String> {
    if let Some(r) = value.read_lock::<ScriptRecord>() {
        return r.names().into_iter().map(str::to_string).collect();
    }
    if let Some(m) = value.read_lock::<rhai::Map>() {
        return m.keys().map(|k| k.to_string()).collect();
    }
    if let Some(d) = value.read_lock::<api_flyback::ScriptFlyback>() {
        return d
            .summary()
            .names()
            .into_iter()
            .map(str::to_string)
            .collect();
    }
    Vec::new()
}

/// Registers every domain on the engine.
pub(crate) fn register_all(
    engine: &mut Engine,
    docs: &mut Vec<&'static FunctionDoc>,
    state: &Arc<host::HostState>,
    limits: &EngineLimits,
) {
    let mut api = Api { engine, docs };
    api_units::register(&mut api, state);
    api_family::register(&mut api, state, limits);
    recipe::register(&mut api, state);
    recipe::register_sleep(&mut api, state);
    api_rules::register(&mut api);
    api_passives::register(&mut api);
    api_magnetics::register(&mut api);
    api_safety::register(&mut api, state);
    api_emi::register(&mut api, state);
    api_mains::register(&mut api);
    api_flyback::register(&mut api, state);
    api_feedback::register(&mut api, state);
    api_design_flow::register(&mut api);
    api_supply::register(&mut api);
}
