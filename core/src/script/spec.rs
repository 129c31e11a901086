//! Reading object-map arguments (`f(#{ output_voltage: 12 * V })`) into typed values:
//! unknown keys suggest the nearest valid key, missing keys name themselves and their unit,
//! defaults come from the same [`ParamDoc`] list the help shows.

use super::convert::{
    dynamic_to_integer, dynamic_to_number, dynamic_to_quantity, dynamic_to_typed,
};
use super::docs::{FunctionDoc, ParamDefault, ParamDoc, ParamKind};
use super::suggest::did_you_mean;
use crate::error::{Error, Result};
use crate::units::{parse_quantity, Quantity, TypedQuantity};
use rhai::{Dynamic, Map, INT};

/// A documented default parsed once per thread: the texts are `'static`, so their address
/// identifies them (a family of designs parsed every default of every variant again).
fn parse_default(text: &'static str) -> Result<Quantity> {
    use std::cell::RefCell;
    use std::collections::HashMap;
    thread_local! {
        static PARSED: RefCell<HashMap<(usize, usize), Quantity>> = RefCell::new(HashMap::new());
    }
    let key = (text.as_ptr() as usize, text.len());
    if let Some(q) = PARSED.with(|p| p.borrow().get(&key).copied()) {
        return Ok(q);
    }
    let q = parse_quantity(text, None)?;
    PARSED.with(|p| p.borrow_mut().insert(key, q));
    Ok(q)
}

thread_local! {
    /// Ignored-key warnings of the `Spec`s read on this thread, until the host collects them.
    static WARNINGS: std::cell::RefCell<Vec<String>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// The ignored-key warnings noted on this thread since the last call (the host collects them
/// after a script and after each family variant).
pub(crate) fn take_thread_warnings() -> Vec<String> {
    WARNINGS.with(|w| std::mem::take(&mut *w.borrow_mut()))
}

/// A checked view of an object-map argument.
///
/// Every key given is checked against its documented kind when the view is made (a quantity
/// of the documented dimension, finite; a finite number; a whole number; a flag; text), read
/// or not, so a key that the configuration ignores still cannot carry NaN or a wrong unit.
/// Keys given but never read are reported when the view is dropped: a warning the runner
/// prints (`ScriptHost::take_warnings`), naming the function and the keys.
pub struct Spec<'a> {
    function: &'static str,
    map: &'a Map,
    keys: &'static [ParamDoc],
    read: std::cell::RefCell<Vec<&'static str>>,
    failed: std::cell::Cell<bool>,
}

impl Drop for Spec<'_> {
    fn drop(&mut self) {
        if self.failed.get() {
            return;
        }
        let read = self.read.borrow();
        let ignored: Vec<&str> = self
            .map
            .iter()
            .filter(|(k, v)| !v.is_unit() && !read.contains(&k.as_str()))
            .map(|(k, _)| k.as_str())
            .collect();
        if ignored.is_empty() {
            return;
        }
        let list = ignored
            .iter()
            .map(|k| format!("`{k}`"))
            .collect::<Vec<_>>()
            .join(", ");
        let text = format!(
            "{}: {} {list} {} checked but not used by this configuration (it has no effect here)",
            self.function,
            if ignored.len() == 1 { "key" } else { "keys" },
            if ignored.len() == 1 { "was" } else { "were" },
        );
        WARNINGS.with(|w| {
            let mut w = w.borrow_mut();
            if !w.contains(&text) {
                w.push(text);
            }
        });
    }
}

/// Checks a given value against its documented kind, whether or not it is read.
fn check_given(function: &str, d: &ParamDoc, v: &Dynamic) -> Result<()> {
    if v.is_unit() {
        return Ok(());
    }
    let key = d.name;
    let finite = |q: Quantity| -> Result<()> {
        if q.value().is_finite() {
            Ok(())
        } else {
            Err(Error::invalid(format!("`{key}` must be finite, got {q}")))
        }
    };
    let r = match d.kind {
        ParamKind::Quantity(unit) => {
            // the documented unit gives the dimension; units the parser does not know
            // ("any unit") are only checked for finiteness
            let expected = parse_quantity(&format!("1 {unit}"), None)
                .ok()
                .map(|q| (q.dimension(), q.is_absolute_temperature()));
            if v.is_array() || v.is_map() || v.is_fnptr() {
                // a binding that takes a list or a map here reads it itself
                return Ok(());
            }
            match expected {
                Some((dim, _)) => {
                    let q = dynamic_to_quantity(v, key, Some(dim))?;
                    if q.is_dimensionless() && !dim.is_dimensionless() {
                        Err(Error::dimension(format!(
                            "`{key}` must be a {dim} ({unit}), got the plain number {q}; write a unit, e.g. `{q} * {}`",
                            crate::units::unit_symbol(dim)
                        )))
                    } else if q.dimension() != dim {
                        Err(Error::dimension(format!(
                            "`{key}` must be in {unit}, got {}",
                            q.describe()
                        )))
                    } else {
                        finite(q)
                    }
                }
                None => match dynamic_to_quantity(v, key, None) {
                    Ok(q) => finite(q),
                    Err(_) => Ok(()),
                },
            }
        }
        ParamKind::Number => {
            if v.is_array() || v.is_map() || v.is_string() {
                return Ok(());
            }
            dynamic_to_number(v, key).and_then(|x| finite(Quantity::number(x)))
        }
        ParamKind::Integer => {
            if v.is_array() || v.is_map() || v.is_string() {
                return Ok(());
            }
            dynamic_to_integer(v, key).map(|_| ())
        }
        _ => Ok(()),
    };
    r.map_err(|e| e.context(function))
}

impl<'a> Spec<'a> {
    /// Checks the map's keys against the function's documented keys.
    pub fn new(doc: &'static FunctionDoc, map: &'a Map) -> Result<Self> {
        let names: Vec<&str> = doc.keys.iter().map(|k| k.name).collect();
        for k in map.keys() {
            if !names.contains(&k.as_str()) {
                return Err(Error::unknown(format!(
                    "{}: unknown key `{k}`{}",
                    doc.name,
                    did_you_mean(k, &names)
                )));
            }
        }
        for d in doc.keys {
            if let Some(v) = map.get(d.name) {
                check_given(doc.name, d, v)?;
            }
        }
        Ok(Self {
            function: doc.name,
            map,
            keys: doc.keys,
            read: std::cell::RefCell::new(Vec::new()),
            failed: std::cell::Cell::new(false),
        })
    }

    fn doc(&self, key: &str) -> Result<&'static ParamDoc> {
        if let Some(d) = self.keys.iter().find(|k| k.name == key) {
            let mut r = self.read.borrow_mut();
            if !r.contains(&d.name) {
                r.push(d.name);
            }
        }
        self.keys.iter().find(|k| k.name == key).ok_or_else(|| {
            Error::unknown(format!(
                "{}: key `{key}` is read but not documented (a gapwise bug; please report it)",
                self.function
            ))
        })
    }

    fn missing(&self, d: &ParamDoc) -> Error {
        self.failed.set(true);
        Error::missing(format!(
            "{}: missing key `{}` ({}, {})",
            self.function,
            d.name,
            d.summary,
            d.kind.describe()
        ))
    }

    fn context(&self, e: Error) -> Error {
        self.failed.set(true);
        e.context(self.function)
    }

    /// The raw value of a key, or its default text converted, or None when optional.
    fn raw(&self, key: &str) -> Result<Option<Dynamic>> {
        let d = self.doc(key)?;
        if let Some(v) = self.map.get(key) {
            if v.is_unit() {
                return Ok(None);
            }
            return Ok(Some(v.clone()));
        }
        match d.default {
            ParamDefault::Required => Err(self.missing(d)),
            ParamDefault::Optional => Ok(None),
            ParamDefault::Value(text) => Ok(Some(match d.kind {
                ParamKind::Quantity(_) | ParamKind::Number => {
                    let q = parse_default(text).map_err(|e| self.context(e))?;
                    if q.is_absolute_temperature() {
                        Dynamic::from(q)
                    } else {
                        super::convert::quantity_to_dynamic(q)
                    }
                }
                ParamKind::Integer => Dynamic::from_int(
                    text.parse::<INT>()
                        .map_err(|_| Error::invalid(format!("bad default '{text}' for `{key}`")))?,
                ),
                ParamKind::Flag => Dynamic::from_bool(text == "true"),
                _ => Dynamic::from(text.to_string()),
            })),
        }
    }

    /// A typed quantity; required unless it has a default.
    pub fn quantity<Q: TypedQuantity>(&self, key: &str) -> Result<Q> {
        match self.raw(key)? {
            Some(v) => dynamic_to_typed(&v, key).map_err(|e| self.context(e)),
            None => Err(self.missing(self.doc(key)?)),
        }
    }

    /// A typed quantity that may be absent.
    pub fn optional_quantity<Q: TypedQuantity>(&self, key: &str) -> Result<Option<Q>> {
        self.raw(key)?
            .map(|v| dynamic_to_typed(&v, key).map_err(|e| self.context(e)))
            .transpose()
    }

    /// A runtime quantity of any dimension (for rules and generic helpers).
    pub fn any_quantity(&self, key: &str) -> Result<Quantity> {
        match self.raw(key)? {
            Some(v) => dynamic_to_quantity(&v, key, None).map_err(|e| self.context(e)),
            None => Err(self.missing(self.doc(key)?)),
        }
    }

    /// A plain number; INT is accepted.
    pub fn number(&self, key: &str) -> Result<f64> {
        match self.raw(key)? {
            Some(v) => dynamic_to_number(&v, key).map_err(|e| self.context(e)),
            None => Err(self.missing(self.doc(key)?)),
        }
    }

    /// A plain number that may be absent.
    pub fn optional_number(&self, key: &str) -> Result<Option<f64>> {
        self.raw(key)?
            .map(|v| dynamic_to_number(&v, key).map_err(|e| self.context(e)))
            .transpose()
    }

    /// A whole number.
    pub fn integer(&self, key: &str) -> Result<INT> {
        match self.raw(key)? {
            Some(v) => dynamic_to_integer(&v, key).map_err(|e| self.context(e)),
            None => Err(self.missing(self.doc(key)?)),
        }
    }

    /// Text.
    pub fn text(&self, key: &str) -> Result<String> {
        match self.optional_text(key)? {
            Some(s) => Ok(s),
            None => Err(self.missing(self.doc(key)?)),
        }
    }

    /// Text that may be absent.
    pub fn optional_text(&self, key: &str) -> Result<Option<String>> {
        match self.raw(key)? {
            None => Ok(None),
            Some(v) => v
                .into_immutable_string()
                .map(|s| Some(s.to_string()))
                .map_err(|t| {
                    self.context(Error::invalid(format!(
                        "`{key}` must be text, got a value of type {t}"
                    )))
                }),
        }
    }

    /// true / false.
    pub fn flag(&self, key: &str) -> Result<bool> {
        match self.raw(key)? {
            None => Err(self.missing(self.doc(key)?)),
            Some(v) => v.as_bool().map_err(|t| {
                self.context(Error::invalid(format!(
                    "`{key}` must be true or false, got a value of type {t}"
                )))
            }),
        }
    }

    /// Marks a key as not used by this configuration even though it was read (for a value
    /// that only matters in another mode), so that it is reported as ignored.
    pub fn ignore(&self, key: &str) {
        self.read.borrow_mut().retain(|k| *k != key);
    }

    /// The raw script value of a key (arrays, maps, functions), if present.
    pub fn value(&self, key: &str) -> Result<Option<Dynamic>> {
        self.raw(key)
    }
}
