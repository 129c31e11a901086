//! Script API of design rules: rule books, checks and their tables.

use super::convert::{dynamic_to_quantity, lift, script_error, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::spec::Spec;
use super::{def, Api};
use crate::error::Error;
use crate::report::Table;
use crate::rules::{checks_table, worst_status, CheckResult, Comparison, Rule, RuleBook, Status};
use rhai::{Array, Dynamic, ImmutableString, Map};

static RULE_BOOK: FunctionDoc = FunctionDoc {
    name: "rule_book",
    domain: Domain::Rules,
    summary:
        "An empty book of design rules; add rules with add_rule, override limits with set_limit.",
    params: &[],
    keys: &[],
    returns: "a RuleBook",
    example: "let rules = rule_book();",
};
static ADD_RULE: FunctionDoc = FunctionDoc {
    name: "add_rule",
    domain: Domain::Rules,
    summary: "Adds a rule to a book (or replaces the rule with the same id).",
    params: &[
        ParamDoc::required("book", ParamKind::Any, "the RuleBook"),
        ParamDoc::required("rule", ParamKind::Map, "the rule, see keys"),
    ],
    keys: &[
        ParamDoc::required("id", ParamKind::Text, "snake_case identifier"),
        ParamDoc::required("description", ParamKind::Text, "what the rule protects"),
        ParamDoc::with_default("reference", ParamKind::Text, "house rule", "where the limit comes from"),
        ParamDoc::with_default("comparison", ParamKind::Text, "at_most", "\"at_most\" or \"at_least\""),
        ParamDoc::required("limit", ParamKind::Quantity("any unit"), "the limit"),
        ParamDoc::with_default("warn_margin", ParamKind::Number, "0.05", "relative margin below which a pass is a warning"),
    ],
    returns: "nothing; the book is changed in place",
    example: "rules.add_rule(#{id: \"switch_voltage\", description: \"drain at most 85 % of 650 V\", limit: 552.5 * V})",
};
static SET_LIMIT: FunctionDoc = FunctionDoc {
    name: "set_limit",
    domain: Domain::Rules,
    summary: "Overrides the limit of a rule by id; the dimension must stay the same, the limit be finite and, when the default is above zero, above zero too. The rule is marked overridden (its text and every check name the new and the default limit, `loosened` when the new one lets more through).",
    params: &[
        ParamDoc::required("book", ParamKind::Any, "the RuleBook"),
        ParamDoc::required("id", ParamKind::Text, "rule id"),
        ParamDoc::required("limit", ParamKind::Quantity("any unit"), "new limit"),
    ],
    keys: &[],
    returns: "nothing; the book is changed in place",
    example: "rules.set_limit(\"switch_voltage\", 520 * V)",
};
static CHECK: FunctionDoc = FunctionDoc {
    name: "check",
    domain: Domain::Rules,
    summary: "Checks a value against the rule with an id: value, limit, margin and pass/warn/fail.",
    params: &[
        ParamDoc::required("book", ParamKind::Any, "the RuleBook"),
        ParamDoc::required("id", ParamKind::Text, "rule id"),
        ParamDoc::required(
            "value",
            ParamKind::Quantity("the rule's unit"),
            "the computed value",
        ),
    ],
    keys: &[],
    returns: "a CheckResult with fields id, status, value, limit, margin, description, limit_overridden, limit_loosened and default_limit (() when the limit is the rule's own)",
    example: "rules.check(\"switch_voltage\", 480 * V)",
};
static CHECK_ALL: FunctionDoc = FunctionDoc {
    name: "check_all",
    domain: Domain::Rules,
    summary: "Checks several values at once, keyed by rule id; returns one table row per check.",
    params: &[
        ParamDoc::required("book", ParamKind::Any, "the RuleBook"),
        ParamDoc::required("values", ParamKind::Map, "rule id → value"),
    ],
    keys: &[],
    returns: "a Table of checks",
    example: "rules.check_all(#{switch_voltage: 480 * V})",
};
static CHECKS_TABLE: FunctionDoc = FunctionDoc {
    name: "checks_table",
    domain: Domain::Rules,
    summary: "A table with one row per check result.",
    params: &[ParamDoc::required(
        "checks",
        ParamKind::List,
        "array of CheckResult",
    )],
    keys: &[],
    returns: "a Table",
    example: "checks_table([rules.check(\"switch_voltage\", 480 * V)])",
};
static WORST: FunctionDoc = FunctionDoc {
    name: "worst_status",
    domain: Domain::Rules,
    summary: "The worst status of an array of check results: \"fail\", \"warn\" or \"pass\".",
    params: &[ParamDoc::required(
        "checks",
        ParamKind::List,
        "array of CheckResult",
    )],
    keys: &[],
    returns: "text",
    example: "worst_status([rules.check(\"switch_voltage\", 480 * V)])",
};

/// One line describing a check, for display.
/// An overridden limit shows `(overridden, default D)`; a check that does not apply shows
/// its reason instead of a limit.
pub(crate) fn check_line(c: &CheckResult) -> String {
    if c.status == Status::NotApplicable {
        return format!(
            "{}  {}: {} — {} [{}]",
            c.status, c.id, c.value, c.description, c.reference
        );
    }
    format!(
        "{:4}  {}: {} {} {} (margin {:.1} %) [{}]",
        c.status.to_string(),
        c.id,
        c.value,
        c.comparison.as_str(),
        c.limit_text(),
        c.margin * 100.0,
        c.reference
    )
}

fn checks_from_array(a: &Array) -> ScriptResult<Vec<CheckResult>> {
    a.iter()
        .map(|d| {
            d.read_lock::<CheckResult>()
                .map(|c| c.clone())
                .ok_or_else(|| {
                    script_error(Error::invalid(format!(
                        "expected an array of check results, found a value of type {}",
                        d.type_name()
                    )))
                })
        })
        .collect()
}

/// A rule book as text, one rule per line: id, comparison, limit, description, reference.
pub(crate) fn rule_book_text(b: &RuleBook) -> String {
    b.rules()
        .iter()
        .map(|r| {
            format!(
                "{}: {} {} ({}) [{}]",
                r.id,
                r.comparison.as_str(),
                r.limit,
                r.text(),
                r.reference
            )
        })
        .collect::<Vec<_>>()
        .join("\n")
}

fn failed(checks: &[CheckResult]) -> usize {
    checks.iter().filter(|c| c.status == Status::Fail).count()
}

pub(crate) fn register(api: &mut Api) {
    let e = &mut *api.engine;
    e.register_type_with_name::<RuleBook>("RuleBook");
    e.register_type_with_name::<CheckResult>("CheckResult");
    e.register_fn("to_string", |b: &mut RuleBook| rule_book_text(b));
    e.register_fn("to_debug", |b: &mut RuleBook| rule_book_text(b));
    e.register_fn("to_string", |c: &mut CheckResult| check_line(c));
    e.register_fn("to_debug", |c: &mut CheckResult| check_line(c));
    e.register_get("id", |c: &mut CheckResult| c.id.clone());
    e.register_get("status", |c: &mut CheckResult| c.status.to_string());
    e.register_get("value", |c: &mut CheckResult| {
        super::convert::quantity_to_dynamic(c.value)
    });
    e.register_get("limit", |c: &mut CheckResult| {
        super::convert::quantity_to_dynamic(c.limit)
    });
    e.register_get("margin", |c: &mut CheckResult| c.margin);
    e.register_get("description", |c: &mut CheckResult| c.description.clone());
    e.register_get("limit_overridden", |c: &mut CheckResult| c.overridden());
    e.register_get("limit_loosened", |c: &mut CheckResult| c.loosened());
    e.register_get("default_limit", |c: &mut CheckResult| {
        match c.default_limit {
            Some(d) => super::convert::quantity_to_dynamic(d),
            None => Dynamic::UNIT,
        }
    });
    e.register_get("passed", |c: &mut CheckResult| c.status != Status::Fail);

    def!(api, &RULE_BOOK, RuleBook::new);
    def!(api, &ADD_RULE, |book: &mut RuleBook,
                          m: Map|
     -> ScriptResult<()> {
        let s = lift(Spec::new(&ADD_RULE, &m))?;
        let rule = lift((|| {
            let limit = s.any_quantity("limit")?;
            if limit.dimension() == crate::units::Dimension::LENGTH && limit.value() <= 0.0 {
                return Err(Error::out_of_range(format!(
                    "add_rule `{}`: a distance limit (`limit`, m) must be above zero, got {limit}",
                    s.text("id")?
                )));
            }
            Rule::new(
                &s.text("id")?,
                &s.text("description")?,
                &s.text("reference")?,
                Comparison::parse(&s.text("comparison")?)?,
                s.any_quantity("limit")?,
                s.number("warn_margin")?,
            )
        })())?;
        book.add(rule);
        Ok(())
    });
    def!(api, &SET_LIMIT, |book: &mut RuleBook,
                           id: ImmutableString,
                           limit: Dynamic|
     -> ScriptResult<()> {
        let l = lift(dynamic_to_quantity(&limit, "limit", None))?;
        lift(book.set_limit(id.as_str(), l))
    });
    // Failed checks count toward --strict when they reach an output (a table or a report
    // handed to the runner), not where they are made.
    def!(api, &CHECK, move |book: &mut RuleBook,
                            id: ImmutableString,
                            value: Dynamic|
          -> ScriptResult<CheckResult> {
        let v = lift(dynamic_to_quantity(&value, "value", None))?;
        let c = lift(book.check(id.as_str(), v))?;
        Ok(c)
    });
    def!(api, &CHECK_ALL, move |book: &mut RuleBook,
                                values: Map|
          -> ScriptResult<Table> {
        let mut out = Vec::new();
        for (id, v) in values.iter() {
            let q = lift(dynamic_to_quantity(v, id, None))?;
            out.push(lift(book.check(id, q))?);
        }
        Ok(checks_table(&out))
    });
    def!(api, &CHECKS_TABLE, |a: Array| -> ScriptResult<Table> {
        Ok(checks_table(&checks_from_array(&a)?))
    });
    def!(api, &WORST, |a: Array| -> ScriptResult<String> {
        Ok(worst_status(&checks_from_array(&a)?).to_string())
    });
}

/// For domain bindings that evaluate rules natively: turns check results into a script array.
pub(crate) fn checks_to_array(checks: Vec<CheckResult>) -> Array {
    checks.into_iter().map(Dynamic::from).collect()
}

/// How many of the checks failed.
pub(crate) fn failed_count(checks: &[CheckResult]) -> usize {
    failed(checks)
}
