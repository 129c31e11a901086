//! Help metadata: one description per script function, shown by the prompt's help, by
//! `gapwise help NAME`, and generated into the README's function reference.

use std::fmt::Write;

/// The engineering domain a function belongs to; listings group by it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Domain {
    /// Quantities, units, conversions and decibels.
    Units,
    /// Families of variants, tables and outputs.
    Families,
    /// Design rules and checks.
    Rules,
    /// Preferred values, dividers, reactance and resonance.
    Passives,
    /// Wires, skin depth, cores, gaps and windings.
    Magnetics,
    /// Rectified mains and the bulk capacitor.
    Mains,
    /// The flyback power stage.
    Flyback,
    /// Insulation, clearance, creepage and safety capacitors.
    Safety,
    /// Conducted emissions and the input filter.
    Emi,
    /// Feedback divider, optocoupler and loop.
    Feedback,
    /// Heat and temperature rise.
    Thermal,
}

impl Domain {
    /// The heading used in listings.
    pub fn title(self) -> &'static str {
        match self {
            Domain::Units => "units",
            Domain::Families => "families and tables",
            Domain::Rules => "design rules",
            Domain::Passives => "passives",
            Domain::Magnetics => "magnetics",
            Domain::Mains => "mains",
            Domain::Flyback => "flyback",
            Domain::Safety => "safety",
            Domain::Emi => "emi",
            Domain::Feedback => "feedback",
            Domain::Thermal => "thermal",
        }
    }
}

/// What kind of value a parameter takes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ParamKind {
    /// A quantity in this unit (any prefix is accepted; text such as "4.7 uF" too).
    Quantity(&'static str),
    /// A plain number (INT or FLOAT).
    Number,
    /// A whole number.
    Integer,
    /// Text.
    Text,
    /// true / false.
    Flag,
    /// An array.
    List,
    /// An object map.
    Map,
    /// A function pointer (`Fn("name")` or a closure).
    Function,
    /// Anything.
    Any,
}

impl ParamKind {
    /// How the kind reads in help text.
    pub fn describe(self) -> String {
        match self {
            ParamKind::Quantity(u) => u.to_string(),
            ParamKind::Number => "number".into(),
            ParamKind::Integer => "integer".into(),
            ParamKind::Text => "text".into(),
            ParamKind::Flag => "true/false".into(),
            ParamKind::List => "array".into(),
            ParamKind::Map => "map".into(),
            ParamKind::Function => "function".into(),
            ParamKind::Any => "any".into(),
        }
    }
}

/// Whether a parameter (or map key) must be given.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ParamDefault {
    /// Must be given.
    Required,
    /// May be left out; the function then does without it.
    Optional,
    /// Taken from this text when left out ("0.7 V", "E24", "25 °C").
    Value(&'static str),
}

/// One parameter of a function, or one key of an object-map argument.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ParamDoc {
    /// Name (snake_case).
    pub name: &'static str,
    /// What it takes.
    pub kind: ParamKind,
    /// Whether it is required, optional or has a default.
    pub default: ParamDefault,
    /// What it means, in a few words.
    pub summary: &'static str,
}

impl ParamDoc {
    /// A required parameter.
    pub const fn required(name: &'static str, kind: ParamKind, summary: &'static str) -> Self {
        Self {
            name,
            kind,
            default: ParamDefault::Required,
            summary,
        }
    }
    /// An optional parameter.
    pub const fn optional(name: &'static str, kind: ParamKind, summary: &'static str) -> Self {
        Self {
            name,
            kind,
            default: ParamDefault::Optional,
            summary,
        }
    }
    /// A parameter with a default, given as text.
    pub const fn with_default(
        name: &'static str,
        kind: ParamKind,
        default: &'static str,
        summary: &'static str,
    ) -> Self {
        Self {
            name,
            kind,
            default: ParamDefault::Value(default),
            summary,
        }
    }
}

/// The help of one script function.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FunctionDoc {
    /// Function name, as called in scripts and in Rust.
    pub name: &'static str,
    /// Domain for listings.
    pub domain: Domain,
    /// One-line summary.
    pub summary: &'static str,
    /// Positional parameters.
    pub params: &'static [ParamDoc],
    /// Keys of the object-map argument, for functions that take one.
    pub keys: &'static [ParamDoc],
    /// What it returns, with unit.
    pub returns: &'static str,
    /// A one-line example that runs at the prompt.
    pub example: &'static str,
}

impl FunctionDoc {
    /// `name(a, b)` with parameter names.
    pub fn signature(&self) -> String {
        let p: Vec<&str> = self.params.iter().map(|p| p.name).collect();
        format!("{}({})", self.name, p.join(", "))
    }

    fn kind_text(p: &ParamDoc) -> String {
        let default = match p.default {
            ParamDefault::Required => String::new(),
            ParamDefault::Optional => ", optional".into(),
            ParamDefault::Value(v) => format!(", default {v}"),
        };
        format!("{}{}", p.kind.describe(), default)
    }

    fn param_line(p: &ParamDoc) -> String {
        format!("{} [{}]: {}", p.name, Self::kind_text(p), p.summary)
    }

    fn param_markdown(p: &ParamDoc) -> String {
        format!("`{}` [{}]: {}", p.name, Self::kind_text(p), p.summary)
    }

    /// Help as plain text for the prompt.
    pub fn to_text(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(s, "{}  ({})", self.signature(), self.domain.title());
        let _ = writeln!(s, "  {}", self.summary);
        for p in self.params {
            let _ = writeln!(s, "    {}", FunctionDoc::param_line(p));
        }
        if !self.keys.is_empty() {
            let _ = writeln!(s, "  keys of the map:");
            for p in self.keys {
                let _ = writeln!(s, "    {}", FunctionDoc::param_line(p));
            }
        }
        let _ = writeln!(s, "  returns: {}", self.returns);
        let _ = writeln!(s, "  example: {}", self.example);
        s
    }

    /// Help as Markdown for the README's function reference.
    pub fn to_markdown(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(s, "#### `{}`\n", self.signature());
        let _ = writeln!(s, "{}\n", self.summary);
        for p in self.params {
            let _ = writeln!(s, "- {}", FunctionDoc::param_markdown(p));
        }
        if !self.keys.is_empty() {
            let _ = writeln!(s, "- keys of the map:");
            for p in self.keys {
                let _ = writeln!(s, "  - {}", FunctionDoc::param_markdown(p));
            }
        }
        let _ = writeln!(s, "- returns: {}", self.returns);
        let _ = writeln!(s, "- example: `{}`\n", self.example);
        s
    }
}

/// Renders a function listing grouped by domain, as text (names and summaries).
pub fn listing_text(docs: &[&FunctionDoc]) -> String {
    let mut sorted: Vec<&&FunctionDoc> = docs.iter().collect();
    sorted.sort_by_key(|d| (d.domain, d.name));
    let mut s = String::new();
    let mut current = None;
    let width = sorted.iter().map(|d| d.name.len()).max().unwrap_or(0);
    for d in sorted {
        if current != Some(d.domain) {
            let _ = writeln!(s, "{}:", d.domain.title());
            current = Some(d.domain);
        }
        let _ = writeln!(s, "  {:width$}  {}", d.name, d.summary);
    }
    s
}

/// Renders the whole function reference as Markdown, grouped by domain.
pub fn reference_markdown(docs: &[&FunctionDoc]) -> String {
    let mut sorted: Vec<&&FunctionDoc> = docs.iter().collect();
    sorted.sort_by_key(|d| (d.domain, d.name));
    let mut s = String::new();
    let mut current = None;
    for d in sorted {
        if current != Some(d.domain) {
            let _ = writeln!(s, "### {}\n", d.domain.title());
            current = Some(d.domain);
        }
        s.push_str(&d.to_markdown());
    }
    s
}
