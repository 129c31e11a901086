//! Script API of families: evaluate a function over a list or grid of variants in parallel,
//! collect one row per variant (error rows for failures), and hand tables to the runner.

use super::convert::{flatten, lift, script_error, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::host::{EngineLimits, HostState, ScriptError};
use super::key_order::KeyOrders;
use super::{def, Api};
use crate::error::Error;
use crate::report::{Field, Table};
use rayon::prelude::*;
use rhai::{Array, Dynamic, FnPtr, ImmutableString, Map, NativeCallContext, INT};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Arc;

static FAMILY: FunctionDoc = FunctionDoc {
    name: "family",
    domain: Domain::Families,
    summary: "Evaluates a function for every variant, in parallel; one row per variant, failures become error rows.",
    params: &[
        ParamDoc::required("design", ParamKind::Function, "function taking one variant (e.g. Fn(\"design\") or |v| ...)"),
        ParamDoc::required("variants", ParamKind::List, "array of variants (maps or values), e.g. from grid"),
    ],
    keys: &[],
    returns: "a Table: the variant's fields, then the result's fields",
    example: "family(|v| #{power: v.voltage * v.current}, grid(#{voltage: [5 * V, 12 * V], current: [1 * A, 2 * A]}))",
};
static GRID: FunctionDoc = FunctionDoc {
    name: "grid",
    domain: Domain::Families,
    summary: "Every combination of the given axes, as an array of maps (the first key as written varies slowest); an axis is an array, a range (`1..4` is 1, 2, 3; `1..=4` adds 4) or a single value.",
    params: &[ParamDoc::required(
        "axes",
        ParamKind::Map,
        "name → array of values, or a range of whole numbers",
    )],
    keys: &[],
    returns: "array of maps",
    example: "grid(#{output_voltage: [5 * V, 12 * V], line: [90 * V, 264 * V]})",
};
static TABLE: FunctionDoc = FunctionDoc {
    name: "table",
    domain: Domain::Families,
    summary: "A table from an array of maps or records, one row each.",
    params: &[ParamDoc::required(
        "rows",
        ParamKind::List,
        "array of maps or records",
    )],
    keys: &[],
    returns: "a Table",
    example: "table([#{a: 1 * V}, #{a: 2 * V}])",
};
static OUTPUT_TABLE: FunctionDoc = FunctionDoc {
    name: "output_table",
    domain: Domain::Families,
    summary: "Hands a table to the runner, which writes it as NAME.csv / NAME.json into --out (scripts never touch files).",
    params: &[
        ParamDoc::required("name", ParamKind::Text, "file stem: letters, digits, _ and -"),
        ParamDoc::required("table", ParamKind::Any, "the Table"),
    ],
    keys: &[],
    returns: "nothing",
    example: "output_table(\"family\", table([#{a: 1 * V}]))",
};
static OUTPUT_TEXT: FunctionDoc = FunctionDoc {
    name: "output_text",
    domain: Domain::Families,
    summary: "Hands a text output (report, SVG plot) to the runner, which writes NAME.EXTENSION into --out.",
    params: &[
        ParamDoc::required("name", ParamKind::Text, "file stem: letters, digits, _ and -"),
        ParamDoc::required("extension", ParamKind::Text, "one of md, html, svg, txt"),
        ParamDoc::required("text", ParamKind::Text, "the content"),
    ],
    keys: &[],
    returns: "nothing",
    example: "output_text(\"notes\", \"md\", \"# Notes\")",
};
static COLUMN: FunctionDoc = FunctionDoc {
    name: "column",
    domain: Domain::Families,
    summary: "The values of one column of a table (unit () where a row has none).",
    params: &[
        ParamDoc::required("table", ParamKind::Any, "the Table"),
        ParamDoc::required("name", ParamKind::Text, "column name"),
    ],
    keys: &[],
    returns: "array",
    example: "table([#{a: 1 * V}, #{a: 2 * V}]).column(\"a\")",
};
static SELECT: FunctionDoc = FunctionDoc {
    name: "select",
    domain: Domain::Families,
    summary: "A table with only the named columns, in the order given (error rows kept).",
    params: &[
        ParamDoc::required("table", ParamKind::Any, "the Table"),
        ParamDoc::required("columns", ParamKind::List, "column names"),
    ],
    keys: &[],
    returns: "a Table",
    example: "table([#{a: 1 * V, b: 2 * A}]).select([\"b\", \"a\"])",
};
static ROW: FunctionDoc = FunctionDoc {
    name: "row",
    domain: Domain::Families,
    summary: "One row of a table as a map (with an `error` key when that variant failed).",
    params: &[
        ParamDoc::required("table", ParamKind::Any, "the Table"),
        ParamDoc::required("index", ParamKind::Integer, "row number from 0"),
    ],
    keys: &[],
    returns: "map",
    example: "table([#{a: 1 * V}]).row(0)",
};
static TO_CSV: FunctionDoc = FunctionDoc {
    name: "to_csv",
    domain: Domain::Families,
    summary: "A table as CSV text, each column in its dimension's fixed unit (in the header), numbers to 4 significant digits.",
    params: &[ParamDoc::required("table", ParamKind::Any, "the Table")],
    keys: &[],
    returns: "text",
    example: "table([#{a: 1 * V}]).to_csv()",
};
static TO_JSON: FunctionDoc = FunctionDoc {
    name: "to_json",
    domain: Domain::Families,
    summary: "A table as JSON text (layout gapwise-table version 1): columns with units, rows in column order.",
    params: &[ParamDoc::required("table", ParamKind::Any, "the Table")],
    keys: &[],
    returns: "text",
    example: "table([#{a: 1 * V}]).to_json()",
};

fn variant_fields(v: &Dynamic, orders: &KeyOrders) -> (Vec<Field>, Vec<String>) {
    let mut f = Vec::new();
    let mut problems = flatten("variant", v, &mut f, orders);
    // maps flatten as variant.key; show the keys themselves
    for x in &mut f {
        if let Some(rest) = x.name.strip_prefix("variant.") {
            x.name = rest.to_string();
        }
    }
    for p in &mut problems {
        *p = p.replacen("field `variant.", "variant field `", 1);
    }
    (f, problems)
}

/// The row fields of one variant's result: a map or a record by field, a design by its
/// summary, a single value as `value`. Nothing, an array, a table or a function is not a row:
/// that variant becomes an error row saying so (never an empty row).
fn result_row(out: &Dynamic, orders: &KeyOrders) -> Result<(Vec<Field>, Vec<String>), String> {
    if out.is_unit() {
        return Err("the variant returned nothing `()`; end the design function with a map or a record of results".into());
    }
    if out.is_array() || out.is::<Table>() || out.is::<FnPtr>() {
        return Err(format!(
            "the variant returned {}, which is not a row; return a map (e.g. `#{{name: value}}`) or a record",
            match out.type_name() {
                "array" => "an array",
                "Table" => "a table",
                _ => "a function",
            }
        ));
    }
    let mut fields = Vec::new();
    let problems = flatten("", out, &mut fields, orders);
    if fields.is_empty() && problems.is_empty() && !out.is_map() {
        return Err(format!(
            "the variant returned a {}, which a row cannot hold; return a map or a record",
            out.type_name()
        ));
    }
    Ok((fields, problems))
}

/// True for errors that end a family rather than one variant: the call-depth limit, and a
/// nested family that stopped as a whole (interrupt, time budget).
fn stops_the_family(e: &rhai::EvalAltResult) -> bool {
    use rhai::EvalAltResult as E;
    let mut cur = e;
    loop {
        match cur {
            E::ErrorInFunctionCall(_, _, inner, _) | E::ErrorInModule(_, inner, _) => cur = inner,
            E::ErrorStackOverflow(_) | E::ErrorTerminated(..) => return true,
            _ => return false,
        }
    }
}

/// Why a family stopped as a whole (Ctrl-C, the time budget): not one variant's error row.
struct Stopped(String);

fn run_family(
    ctx: &NativeCallContext,
    state: &HostState,
    limits: &EngineLimits,
    f: &FnPtr,
    variants: &Array,
) -> ScriptResult<Table> {
    let engine = ctx.engine();
    // every variant runs in the caller's context: the recipe's functions and top-level
    // constants are visible, and the call depth counts from here (a family inside a family
    // inside … meets the call-depth limit)
    let global = ctx.global_runtime_state();
    let fn_name = ctx.fn_name();
    let source = ctx.call_source();
    let pos = ctx.call_position();
    let total = variants.len();
    let done = AtomicUsize::new(0);
    let progress = state.progress();
    let run_all = || -> Vec<Result<Result<Dynamic, String>, Stopped>> {
        variants
            .par_iter()
            .map(|v| {
                if let Some(why) = state.should_stop() {
                    return Err(Stopped(why));
                }
                let vctx =
                    NativeCallContext::new_with_all_fields(engine, fn_name, source, global, pos);
                // a panic in native code (a bug, or an embedder's function) fails this variant
                // only: it becomes the variant's error row and the others go on
                let call = std::panic::AssertUnwindSafe(|| f.call_raw(&vctx, None, [v.clone()]));
                let r = match std::panic::catch_unwind(call) {
                    Ok(r) => r,
                    Err(payload) => {
                        if let Some(p) = &progress {
                            p(done.fetch_add(1, Ordering::Relaxed) + 1, total);
                        }
                        return Ok(Err(panic_message(payload.as_ref())));
                    }
                };
                state.collect_warnings();
                if let Some(p) = &progress {
                    p(done.fetch_add(1, Ordering::Relaxed) + 1, total);
                }
                match r {
                    Ok(x) => Ok(Ok(x)),
                    Err(e) => {
                        if let Some(why) = state.should_stop() {
                            return Err(Stopped(why));
                        }
                        if stops_the_family(&e) {
                            // too deep, or stopped inside a nested family: the same in every
                            // variant, so the family as a whole stops
                            return Err(Stopped(
                                ScriptError::from_eval(&e, "", "", limits).message,
                            ));
                        }
                        Ok(Err(ScriptError::from_eval(&e, "", "", limits).message))
                    }
                }
            })
            .collect()
    };
    let results = match state.family_pool() {
        Some(pool) => pool.install(run_all),
        None => run_all(),
    };
    let mut table = Table::new();
    let orders = state.key_orders();
    for (v, r) in variants.iter().zip(results) {
        let (mut fields, mut problems) = variant_fields(v, &orders);
        match r {
            Ok(Ok(out)) => match result_row(&out, &orders) {
                Ok((result, more)) => {
                    problems.extend(more);
                    if problems.is_empty() {
                        fields.extend(result);
                        table.push_row(fields);
                    } else {
                        table.push_error_row(fields, problems.join("; "));
                    }
                }
                Err(message) => table.push_error_row(fields, message),
            },
            Ok(Err(message)) => table.push_error_row(fields, message),
            Err(Stopped(why)) => {
                return Err(Box::new(rhai::EvalAltResult::ErrorTerminated(
                    Dynamic::from(why),
                    pos,
                )))
            }
        }
    }
    Ok(table)
}

#[cold]
fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    let what = payload
        .downcast_ref::<&str>()
        .map(|s| s.to_string())
        .or_else(|| payload.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "no message".to_string());
    format!("internal error: native code panicked in this variant ({what}); please report it")
}

/// A range axis (`1..4`, `1..=4`) as its half-open bounds.
fn axis_range(v: &Dynamic) -> Option<(INT, INT)> {
    if let Some(r) = v.read_lock::<std::ops::Range<INT>>() {
        return Some((r.start, r.end));
    }
    if let Some(r) = v.read_lock::<std::ops::RangeInclusive<INT>>() {
        return Some((*r.start(), r.end().saturating_add(1)));
    }
    None
}

fn grid(axes: &Map, max_rows: usize, orders: &KeyOrders) -> crate::error::Result<Array> {
    let mut rows: Vec<Map> = vec![Map::new()];
    for name in orders.keys_of(axes) {
        let Some(values) = axes.get(name) else {
            continue;
        };
        let list: Array = match axis_range(values) {
            Some((start, end)) => {
                // counted before any value is made, so a huge range is refused, not built
                let n = usize::try_from(end.saturating_sub(start).max(0)).unwrap_or(usize::MAX);
                if rows.len().saturating_mul(n) > max_rows {
                    return Err(Error::out_of_range(format!(
                        "the grid would have more than {max_rows} variants (the array size limit): axis `{name}` is a range of {n} values"
                    )));
                }
                (start..end).map(Dynamic::from_int).collect()
            }
            None => match values.read_lock::<Array>() {
                Some(a) => a.clone(),
                None => vec![values.clone()],
            },
        };
        if list.is_empty() {
            return Err(Error::invalid(format!("grid axis `{name}` has no values")));
        }
        if rows.len().saturating_mul(list.len()) > max_rows {
            return Err(Error::out_of_range(format!(
                "the grid would have more than {max_rows} variants (the array size limit)"
            )));
        }
        let mut next = Vec::with_capacity(rows.len() * list.len());
        for r in &rows {
            for v in &list {
                let mut m = r.clone();
                m.insert(name.into(), v.clone());
                next.push(m);
            }
        }
        rows = next;
    }
    Ok(rows.into_iter().map(Dynamic::from_map).collect())
}

fn valid_output_name(name: &str) -> crate::error::Result<()> {
    if name.is_empty()
        || name.len() > 64
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(Error::invalid(format!(
            "output name '{name}' must be 1 to 64 letters, digits, '_' or '-' (it becomes a file name)"
        )));
    }
    Ok(())
}

pub(crate) fn register(api: &mut Api, state: &Arc<HostState>, limits: &EngineLimits) {
    let e = &mut *api.engine;
    e.register_type_with_name::<Table>("Table");
    e.register_fn("to_string", |t: &mut Table| t.to_text());
    e.register_fn("to_debug", |t: &mut Table| t.to_text());
    e.register_fn("len", |t: &mut Table| t.len() as INT);
    e.register_get("rows", |t: &mut Table| t.len() as INT);
    e.register_get("error_count", |t: &mut Table| t.error_count() as INT);
    e.register_get("columns", |t: &mut Table| -> Array {
        t.column_names()
            .iter()
            .map(|n| Dynamic::from(n.clone()))
            .collect()
    });

    let st = state.clone();
    let lim = limits.clone();
    def!(api, &FAMILY, move |ctx: NativeCallContext,
                             f: FnPtr,
                             variants: Array|
          -> ScriptResult<Table> {
        run_family(&ctx, &st, &lim, &f, &variants)
    });
    let max_rows = limits.max_array_size;
    let st = state.clone();
    def!(api, &GRID, move |axes: Map| -> ScriptResult<Array> {
        lift(grid(&axes, max_rows, &st.key_orders()))
    });
    let st = state.clone();
    def!(api, &TABLE, move |rows: Array| -> ScriptResult<Table> {
        let mut t = Table::new();
        let orders = st.key_orders();
        for (i, r) in rows.iter().enumerate() {
            let mut f = Vec::new();
            let problems = flatten("", r, &mut f, &orders);
            if !problems.is_empty() {
                return Err(script_error(Error::invalid(format!(
                    "table row {i}: {}",
                    problems.join("; ")
                ))));
            }
            t.push_row(f);
        }
        Ok(t)
    });
    let st = state.clone();
    def!(api, &OUTPUT_TABLE, move |name: ImmutableString,
                                   t: Table|
          -> ScriptResult<()> {
        lift(valid_output_name(&name))?;
        lift(st.push_output(name.to_string(), t))
    });
    let st = state.clone();
    def!(api, &OUTPUT_TEXT, move |name: ImmutableString,
                                  extension: ImmutableString,
                                  text: ImmutableString|
          -> ScriptResult<()> {
        lift(valid_output_name(&name))?;
        if !["md", "html", "svg", "txt"].contains(&extension.as_str()) {
            return Err(script_error(Error::invalid(format!(
                "output extension '{extension}' must be one of md, html, svg, txt"
            ))));
        }
        lift(st.push_text(super::host::OutputText {
            name: name.to_string(),
            extension: extension.to_string(),
            text: text.to_string(),
        }))
    });
    def!(api, &COLUMN, |t: &mut Table,
                        name: ImmutableString|
     -> ScriptResult<Array> {
        if !t.column_names().iter().any(|n| n == name.as_str()) {
            let names: Vec<&str> = t.column_names().iter().map(String::as_str).collect();
            return Err(script_error(Error::unknown(format!(
                "the table has no column `{name}`{}",
                super::suggest::did_you_mean(&name, &names)
            ))));
        }
        Ok((0..t.len())
            .map(|i| {
                t.get(i, &name)
                    .map(super::convert::value_to_dynamic)
                    .unwrap_or(Dynamic::UNIT)
            })
            .collect())
    });
    def!(api, &SELECT, |t: &mut Table,
                        columns: Array|
     -> ScriptResult<Table> {
        let names: Vec<String> = columns
            .into_iter()
            .map(|c| {
                c.into_immutable_string()
                    .map(|s| s.to_string())
                    .map_err(|t| {
                        script_error(Error::invalid(format!(
                            "column names must be text, got {t}"
                        )))
                    })
            })
            .collect::<ScriptResult<_>>()?;
        let refs: Vec<&str> = names.iter().map(String::as_str).collect();
        lift(t.select(&refs))
    });
    def!(api, &ROW, |t: &mut Table, i: INT| -> ScriptResult<Map> {
        let i = usize::try_from(i)
            .ok()
            .filter(|i| *i < t.len())
            .ok_or_else(|| {
                script_error(Error::out_of_range(format!(
                    "row {i} is outside the table's {} rows",
                    t.len()
                )))
            })?;
        let mut m = Map::new();
        for n in t.column_names() {
            if let Some(v) = t.get(i, n) {
                m.insert(n.as_str().into(), super::convert::value_to_dynamic(v));
            }
        }
        if let Some(e) = t.error(i) {
            m.insert("error".into(), Dynamic::from(e.to_string()));
        }
        Ok(m)
    });
    def!(api, &TO_CSV, |t: &mut Table| -> ScriptResult<String> {
        lift(t.to_csv(&crate::report::WriteOptions::default()))
    });
    def!(api, &TO_JSON, |t: &mut Table| -> ScriptResult<String> {
        lift(t.to_json(&crate::report::WriteOptions::default()))
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_order_and_limits() {
        let mut axes = Map::new();
        axes.insert(
            "a".into(),
            Dynamic::from_array(vec![Dynamic::from_int(1), Dynamic::from_int(2)]),
        );
        axes.insert(
            "b".into(),
            Dynamic::from_array(vec![
                Dynamic::from_int(3),
                Dynamic::from_int(4),
                Dynamic::from_int(5),
            ]),
        );
        let orders = KeyOrders::default();
        let g = grid(&axes, 100, &orders).unwrap();
        assert_eq!(g.len(), 6);
        assert!(grid(&axes, 5, &orders).is_err());
        assert!(valid_output_name("../x").is_err());
        assert!(valid_output_name("family_12v").is_ok());
    }
}
