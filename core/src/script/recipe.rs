//! What a recipe may name and declare: protected names (unit constants and built-in
//! functions cannot be redefined) and recipe parameters (`param(...)`), which `--set`
//! replaces once, before the recipe runs, everywhere.

use super::host::ScriptError;
use crate::units::Quantity;
use rhai::{ASTNode, Dynamic, Expr, Position, Stmt, AST};
use std::collections::HashSet;

/// A parameter a recipe declares with `param(name, default, description)`.
#[derive(Clone, Debug)]
pub struct RecipeParam {
    /// The name, as `--set NAME=VALUE` gives it.
    pub name: String,
    /// The default value.
    pub default: Dynamic,
    /// What the parameter means.
    pub description: String,
}

impl RecipeParam {
    /// What kind of value the parameter takes, for `run RECIPE --help` and usage errors:
    /// the dimension and unit for a quantity, else `number`, `text`, `flag`.
    pub fn kind(&self) -> String {
        value_kind(&self.default)
    }
    /// The default as it prints.
    pub fn default_text(&self) -> String {
        super::api_units::display_value(&self.default)
    }

    /// Reads a `--set` value for this parameter: the same kind as the default (a quantity of
    /// the same dimension, a number, a flag or text). The error names the parameter, the
    /// value and what was expected.
    pub fn parse_override(&self, text: &str) -> Result<Dynamic, String> {
        let text = text.trim();
        let d = &self.default;
        if let Some(q) = d.read_lock::<Quantity>() {
            let parsed = crate::units::parse_quantity(text, Some(q.dimension()))
                .map_err(|e| format!("--set {}: {}", self.name, e.message()))?;
            if parsed.dimension() != q.dimension() {
                let unit = crate::units::unit_symbol(q.dimension());
                return Err(if parsed.is_dimensionless() {
                    format!(
                        "--set {}={text}: `{}` is a {} and needs a unit, e.g. --set {}=\"{text} {unit}\"",
                        self.name,
                        self.name,
                        q.dimension(),
                        self.name
                    )
                } else {
                    format!(
                        "--set {}={text}: `{}` is a {} ({unit}), got {}",
                        self.name,
                        self.name,
                        q.dimension(),
                        parsed.describe()
                    )
                });
            }
            if q.is_absolute_temperature() != parsed.is_absolute_temperature() {
                return Err(format!(
                    "--set {}={text}: `{}` is {}, got {}",
                    self.name,
                    self.name,
                    temperature_kind(q.is_absolute_temperature()),
                    temperature_kind(parsed.is_absolute_temperature())
                ));
            }
            return Ok(Dynamic::from(parsed));
        }
        if d.is_bool() {
            return match text {
                "true" => Ok(Dynamic::TRUE),
                "false" => Ok(Dynamic::FALSE),
                _ => Err(format!(
                    "--set {}={text}: `{}` is a flag: true or false",
                    self.name, self.name
                )),
            };
        }
        if d.is_int() {
            return text.parse::<i64>().map(Dynamic::from_int).map_err(|_| {
                format!(
                    "--set {}={text}: `{}` is a whole number",
                    self.name, self.name
                )
            });
        }
        if d.is_float() {
            return match crate::units::parse_quantity(text, None) {
                Ok(q) if q.is_dimensionless() && q.value().is_finite() => {
                    Ok(Dynamic::from_float(q.value()))
                }
                _ => Err(format!(
                    "--set {}={text}: `{}` is a plain number",
                    self.name, self.name
                )),
            };
        }
        if d.is_string() {
            return Ok(Dynamic::from(text.to_string()));
        }
        Err(format!(
            "--set {}: the recipe's default is a {}, which --set cannot give",
            self.name,
            d.type_name()
        ))
    }
}

fn temperature_kind(absolute: bool) -> &'static str {
    if absolute {
        "an absolute temperature (write \"40 °C\")"
    } else {
        "a temperature difference (write \"40 K\")"
    }
}

/// The kind of a value in words: `frequency (Hz)`, `number`, `text`, `flag`.
pub fn value_kind(d: &Dynamic) -> String {
    if let Some(q) = d.read_lock::<Quantity>() {
        if q.is_absolute_temperature() {
            return "absolute temperature (°C)".to_string();
        }
        return format!(
            "{} ({})",
            q.dimension(),
            crate::units::unit_symbol(q.dimension())
        );
    }
    if d.is_bool() {
        "flag".into()
    } else if d.is_int() {
        "whole number".into()
    } else if d.is_float() {
        "number".into()
    } else if d.is_string() {
        "text".into()
    } else {
        d.type_name().to_string()
    }
}

/// Names a recipe may not take for its own variables, parameters and functions.
pub(crate) struct ProtectedNames {
    /// Unit constants (`V`, `mm`, `s`, …), `pi`, `dB`.
    pub(crate) constants: HashSet<&'static str>,
    /// Every function the engine has natively: gapwise's, the standard library's and an
    /// embedder's.
    pub(crate) functions: HashSet<String>,
}

impl ProtectedNames {
    /// Reads the native function names from the engine's signatures.
    pub(crate) fn from_engine(engine: &rhai::Engine) -> Self {
        let functions = engine
            .gen_fn_signatures(false)
            .into_iter()
            .filter_map(|sig| {
                let name = sig.split('(').next()?.trim();
                let name = name.rsplit(' ').next().unwrap_or(name);
                let ok = name
                    .chars()
                    .next()
                    .is_some_and(|c| c.is_alphabetic() || c == '_')
                    && name.chars().all(|c| c.is_alphanumeric() || c == '_');
                ok.then(|| name.to_string())
            })
            .collect();
        Self {
            constants: super::api_units::constant_names().into_iter().collect(),
            functions,
        }
    }

    /// The message for a variable that would shadow a unit constant.
    pub(crate) fn constant_message(name: &str) -> String {
        let what = super::api_units::constant_text(name)
            .map(|t| format!("the unit constant 1 {t}"))
            .unwrap_or_else(|| "a built-in constant".to_string());
        format!("`{name}` is {what} and cannot be redefined; give the value another name (e.g. `{name}_value`)")
    }

    /// Checks a compiled script: no function may redefine a native one, and no variable,
    /// constant, loop variable or function parameter may take a unit constant's name.
    pub(crate) fn check(
        &self,
        ast: &AST,
        source: &str,
        source_name: &str,
    ) -> Result<(), ScriptError> {
        for f in ast.iter_functions() {
            if self.functions.contains(f.name) {
                let pos = find_fn_definition(source, f.name);
                return Err(ScriptError::at(
                    format!(
                        "`{}` is a built-in function and cannot be redefined by a recipe; give yours another name (e.g. `house_{}`)",
                        f.name, f.name
                    ),
                    pos,
                    source,
                    source_name,
                ));
            }
            // a closure's parameters include the variables it captures (a unit constant it
            // reads is captured by name), so only named functions are checked here
            if f.name.starts_with("anon$") {
                continue;
            }
            for p in &f.params {
                if self.constants.contains(p) {
                    return Err(ScriptError::at(
                        format!(
                            "parameter {} (in `fn {}`)",
                            Self::constant_message(p),
                            f.name
                        ),
                        find_fn_definition(source, f.name),
                        source,
                        source_name,
                    ));
                }
            }
        }
        let mut found: Option<(String, Position)> = None;
        ast.walk(&mut |path: &[ASTNode]| {
            let Some(node) = path.last() else {
                return true;
            };
            let names: Vec<(&str, Position)> = match node {
                ASTNode::Stmt(Stmt::Var(x, _, pos)) => vec![(x.0.name.as_str(), *pos)],
                ASTNode::Stmt(Stmt::For(x, pos)) => {
                    let mut v = vec![(x.0.name.as_str(), *pos)];
                    if let Some(c) = &x.1 {
                        v.push((c.name.as_str(), *pos));
                    }
                    v
                }
                ASTNode::Expr(Expr::FnCall(call, pos)) if call.name.as_str() == "param" => {
                    // param("V", ...) would shadow a unit through --set
                    match call.args.first() {
                        Some(Expr::StringConstant(s, _)) => vec![(s.as_str(), *pos)],
                        _ => vec![],
                    }
                }
                _ => vec![],
            };
            for (name, pos) in names {
                if self.constants.contains(name) {
                    found = Some((name.to_string(), pos));
                    return false;
                }
            }
            true
        });
        if let Some((name, pos)) = found {
            return Err(ScriptError::at(
                Self::constant_message(&name),
                pos,
                source,
                source_name,
            ));
        }
        Ok(())
    }
}

/// Where `fn NAME` stands in the source, for the error's caret.
fn find_fn_definition(source: &str, name: &str) -> Position {
    for (i, line) in source.lines().enumerate() {
        let t = line.trim_start();
        let rest = t
            .strip_prefix("private fn ")
            .or_else(|| t.strip_prefix("fn "));
        if let Some(rest) = rest {
            if rest
                .trim_start()
                .strip_prefix(name)
                .is_some_and(|r| r.trim_start().starts_with('('))
            {
                let col = line.len() - t.len() + 1;
                return Position::new(
                    u16::try_from(i + 1).unwrap_or(u16::MAX),
                    u16::try_from(col).unwrap_or(u16::MAX),
                );
            }
        }
    }
    Position::NONE
}

/// The top-level statements of a script that declare parameters (`param(...)` alone or as
/// the value of a `let`/`const`), as a script of their own: running it lists the
/// parameters without running the recipe.
pub(crate) fn declarations_only(ast: &AST) -> AST {
    let is_param_call = |e: &Expr| matches!(e, Expr::FnCall(c, _) if c.name.as_str() == "param");
    let statements: Vec<Stmt> = ast
        .statements()
        .iter()
        .filter(|s| match s {
            Stmt::Var(x, ..) => is_param_call(&x.1),
            Stmt::FnCall(c, _) => c.name.as_str() == "param",
            Stmt::Expr(e) => is_param_call(e),
            _ => false,
        })
        .cloned()
        .collect();
    AST::new(statements, rhai::Module::new())
}

static PARAM: super::docs::FunctionDoc = super::docs::FunctionDoc {
    name: "param",
    domain: super::docs::Domain::Families,
    summary: "Declares a recipe parameter at the top level and returns its value: the default, or the value `gapwise run RECIPE --set NAME=VALUE` gives (checked against the default's kind and dimension). `gapwise run RECIPE --help` lists the parameters. Use it as `const name = param(\"name\", default, \"what it means\");` so every function, closure and family variant sees one value.",
    params: &[
        super::docs::ParamDoc::required("name", super::docs::ParamKind::Text, "the parameter's name (a script name, not a unit constant)"),
        super::docs::ParamDoc::required("default", super::docs::ParamKind::Any, "quantity, number, flag or text"),
        super::docs::ParamDoc::required("description", super::docs::ParamKind::Text, "what it means"),
    ],
    keys: &[],
    returns: "the value",
    example: "param(\"switching_frequency\", 65 * kHz, \"switching frequency of every member\")",
};

/// Registers `param`.
pub(crate) fn register(api: &mut super::Api, state: &std::sync::Arc<super::host::HostState>) {
    use super::convert::script_error;
    use crate::error::Error;
    let st = state.clone();
    super::def!(api, &PARAM, move |ctx: rhai::NativeCallContext,
                                   name: rhai::ImmutableString,
                                   default: Dynamic,
                                   description: rhai::ImmutableString|
          -> super::convert::ScriptResult<
        Dynamic,
    > {
        // a native function called from the top level runs at call level 1
        if ctx.call_level() > 1 {
            return Err(script_error(Error::invalid(format!(
                "param(\"{name}\", …) declares a recipe parameter and belongs at the top level of the recipe, not inside a function or closure"
            ))));
        }
        let valid = name
            .chars()
            .next()
            .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
            && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
        if !valid {
            return Err(script_error(Error::invalid(format!(
                "param name `{name}` must be a script name (letters, digits and _, not starting with a digit)"
            ))));
        }
        if super::api_units::constant_text(&name).is_some() || name.as_str() == "pi" {
            return Err(script_error(Error::invalid(
                ProtectedNames::constant_message(&name),
            )));
        }
        let finite = match default.read_lock::<Quantity>() {
            Some(q) => q.value().is_finite(),
            None => default.as_float().map_or(true, f64::is_finite),
        };
        if !finite {
            return Err(script_error(Error::invalid(format!(
                "the `default` of param `{name}` must be finite, got {}",
                super::api_units::display_value(&default)
            ))));
        }
        let supported = default.is::<Quantity>()
            || default.is_bool()
            || default.is_int()
            || default.is_float()
            || default.is_string();
        if !supported {
            return Err(script_error(Error::invalid(format!(
                "the default of param `{name}` must be a quantity, number, flag or text, got {}",
                default.type_name()
            ))));
        }
        let p = RecipeParam {
            name: name.to_string(),
            default: default.clone(),
            description: description.to_string(),
        };
        st.declare_param(p)
            .map_err(|m| script_error(Error::invalid(m)))?;
        Ok(st.param_override(&name).unwrap_or(default))
    });
}

static SLEEP: super::docs::FunctionDoc = super::docs::FunctionDoc {
    name: "sleep",
    domain: super::docs::Domain::Families,
    summary: "Pauses the script for a number of seconds, within the run's time budget (Ctrl-C and the budget end it).",
    params: &[super::docs::ParamDoc::required(
        "seconds",
        super::docs::ParamKind::Number,
        "finite, not negative",
    )],
    keys: &[],
    returns: "nothing",
    example: "sleep(0.01)",
};

/// Registers a `sleep` that the time budget and the interrupt bound (the standard library's
/// ignores both and panics on 1e300).
pub(crate) fn register_sleep(api: &mut super::Api, state: &std::sync::Arc<super::host::HostState>) {
    use super::convert::script_error;
    use crate::error::Error;
    let sleep = {
        let st = state.clone();
        move |seconds: f64| -> super::convert::ScriptResult<()> {
            if !seconds.is_finite() || seconds < 0.0 {
                return Err(script_error(Error::invalid(format!(
                    "`seconds` of sleep must be a finite number, not negative, got {seconds}"
                ))));
            }
            let end = std::time::Instant::now()
                .checked_add(std::time::Duration::from_secs_f64(seconds.min(1.0e9)));
            loop {
                if let Some(why) = st.should_stop() {
                    return Err(Box::new(rhai::EvalAltResult::ErrorTerminated(
                        Dynamic::from(why),
                        Position::NONE,
                    )));
                }
                let now = std::time::Instant::now();
                let left = match end {
                    Some(e) if e > now => e - now,
                    Some(_) => return Ok(()),
                    None => std::time::Duration::from_millis(10),
                };
                std::thread::sleep(left.min(std::time::Duration::from_millis(10)));
            }
        }
    };
    let s2 = sleep.clone();
    super::def!(api, &SLEEP, move |seconds: rhai::FLOAT| sleep(seconds));
    super::overload!(api, "sleep", move |seconds: rhai::INT| s2(seconds as f64));
}
