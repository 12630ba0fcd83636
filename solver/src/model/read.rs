//! Reading the TOML tree: typed getters that record every problem (with its
//! line and column) instead of stopping at the first.

use std::ops::Range;

use toml_edit::{Item, TableLike, Value};

use super::error::{ErrorKind, LineIndex, ModelError, ModelWarning};
use super::suggest;
use fluxwright_mesher::Point;

/// A byte range in the model text.
pub(crate) type Span = Option<Range<usize>>;

/// A value missing (`Ok(None)`), present and good (`Ok(Some)`), or bad and
/// already reported (`Err(Reported)`).
pub(crate) type Field<T> = Result<Option<T>, Reported>;

/// Marker: the problem was recorded in the context.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Reported;

/// A table (header or inline) with the label used in messages.
#[derive(Clone)]
pub(crate) struct Section<'a> {
    pub table: &'a dyn TableLike,
    pub span: Span,
    /// e.g. "[materials.core]" or "shape `coil`".
    pub label: String,
}

/// Collects errors and warnings while reading one model.
pub(crate) struct Ctx<'a> {
    pub file: String,
    text: &'a str,
    lines: LineIndex,
    pub errors: Vec<ModelError>,
    pub warnings: Vec<ModelWarning>,
}

impl<'a> Ctx<'a> {
    pub(crate) fn new(file: &str, text: &'a str) -> Ctx<'a> {
        Ctx {
            file: file.to_string(),
            text,
            lines: LineIndex::new(text),
            errors: Vec::new(),
            warnings: Vec::new(),
        }
    }

    fn locate(&self, span: &Span) -> (Option<usize>, Option<usize>) {
        match span {
            Some(r) => {
                let (l, c) = self.lines.locate(self.text, r.start);
                (Some(l), Some(c))
            }
            None => (None, None),
        }
    }

    /// The 1-based line of a span.
    pub(crate) fn line(&self, span: &Span) -> Option<usize> {
        self.locate(span).0
    }

    pub(crate) fn error(
        &mut self,
        kind: ErrorKind,
        span: &Span,
        what: impl Into<String>,
    ) -> Reported {
        let (line, column) = self.locate(span);
        self.errors.push(ModelError {
            file: self.file.clone(),
            line,
            column,
            kind,
            what: what.into(),
        });
        Reported
    }

    pub(crate) fn warn(&mut self, span: &Span, what: impl Into<String>) {
        let (line, column) = self.locate(span);
        self.warnings.push(ModelWarning {
            file: self.file.clone(),
            line,
            column,
            what: what.into(),
        });
    }

    /// Report every key of `sec` not in `allowed`, suggesting the nearest
    /// allowed key, or the table a known key belongs in. Returns how many
    /// were reported.
    pub(crate) fn check_keys(&mut self, sec: &Section<'_>, allowed: &[&str]) -> usize {
        let mut unknown = 0;
        for (key, item) in sec.table.iter() {
            if allowed.contains(&key) {
                continue;
            }
            let span = key_span(sec, key).or_else(|| item.span());
            let mut hint = suggest::did_you_mean(key, allowed.iter().copied());
            if hint.is_empty() {
                if let Some(home) = home_of_key(key) {
                    hint = format!("; `{key}` belongs in {home}");
                } else {
                    hint = format!("; valid keys here: {}", allowed.join(", "));
                }
            }
            self.error(
                ErrorKind::UnknownKey,
                &span,
                format!("unknown key `{key}` in {}{hint}", sec.label),
            );
            unknown += 1;
        }
        unknown
    }

    /// A sub-table (header table or inline table) under `key`.
    pub(crate) fn section<'t>(
        &mut self,
        sec: &Section<'t>,
        key: &str,
        label: String,
    ) -> Field<Section<'t>> {
        let Some(item) = sec.table.get(key) else {
            return Ok(None);
        };
        match item.as_table_like() {
            Some(table) => Ok(Some(Section {
                table,
                span: item.span().or_else(|| key_span(sec, key)),
                label,
            })),
            None => Err(self.wrong_type(sec, key, item, "a table")),
        }
    }

    /// An array of tables under `key`, as `[[key]]` headers or as an array of
    /// inline tables.
    pub(crate) fn sections<'t>(
        &mut self,
        sec: &Section<'t>,
        key: &str,
    ) -> Vec<Option<Section<'t>>> {
        let Some(item) = sec.table.get(key) else {
            return Vec::new();
        };
        match item {
            Item::ArrayOfTables(array) => array
                .iter()
                .enumerate()
                .map(|(i, t)| {
                    Some(Section {
                        table: t as &dyn TableLike,
                        span: t.span(),
                        label: format!("[[{key}]] #{}", i + 1),
                    })
                })
                .collect(),
            Item::Value(Value::Array(array)) => array
                .iter()
                .enumerate()
                .map(|(i, v)| match v.as_inline_table() {
                    Some(t) => Some(Section {
                        table: t as &dyn TableLike,
                        span: t.span(),
                        label: format!("[[{key}]] #{}", i + 1),
                    }),
                    None => {
                        self.error(
                            ErrorKind::WrongType,
                            &v.span(),
                            format!(
                                "`{key}` #{} must be a table, found {}",
                                i + 1,
                                v.type_name()
                            ),
                        );
                        None
                    }
                })
                .collect(),
            other => {
                self.wrong_type(
                    sec,
                    key,
                    other,
                    &format!("an array of tables (write `[[{key}]]` headers)"),
                );
                Vec::new()
            }
        }
    }

    pub(crate) fn wrong_type(
        &mut self,
        sec: &Section<'_>,
        key: &str,
        item: &Item,
        expected: &str,
    ) -> Reported {
        let span = item.span().or_else(|| key_span(sec, key));
        self.error(
            ErrorKind::WrongType,
            &span,
            format!(
                "`{key}` in {} must be {expected}, found {}",
                sec.label,
                item.type_name()
            ),
        )
    }

    fn value<'t>(&mut self, sec: &Section<'t>, key: &str, expected: &str) -> Field<&'t Value> {
        match sec.table.get(key) {
            None => Ok(None),
            Some(Item::Value(v)) => Ok(Some(v)),
            Some(other) => Err(self.wrong_type(sec, key, other, expected)),
        }
    }

    /// Report a missing required key.
    pub(crate) fn missing(&mut self, sec: &Section<'_>, key: &str, advice: &str) -> Reported {
        self.error(
            ErrorKind::MissingKey,
            &sec.span,
            format!("{} needs `{key}`{advice}", sec.label),
        )
    }

    /// A finite number (integer or float).
    pub(crate) fn number(&mut self, sec: &Section<'_>, key: &str) -> Field<f64> {
        let Some(v) = self.value(sec, key, "a number")? else {
            return Ok(None);
        };
        let x = match v {
            Value::Integer(i) => *i.value() as f64,
            Value::Float(f) => *f.value(),
            _ => return Err(self.wrong_value_type(sec, key, v, "a number")),
        };
        if !x.is_finite() {
            return Err(self.error(
                ErrorKind::OutOfRange,
                &v.span(),
                format!(
                    "`{key}` in {} must be a finite number, found {x}",
                    sec.label
                ),
            ));
        }
        Ok(Some(x))
    }

    /// A finite number that satisfies `ok`, else an out-of-range error that
    /// says `rule` (e.g. "must be > 0").
    pub(crate) fn number_where(
        &mut self,
        sec: &Section<'_>,
        key: &str,
        ok: impl Fn(f64) -> bool,
        rule: &str,
    ) -> Field<f64> {
        let Some(x) = self.number(sec, key)? else {
            return Ok(None);
        };
        if ok(x) {
            Ok(Some(x))
        } else {
            let span = self.span_of(sec, key);
            Err(self.error(
                ErrorKind::OutOfRange,
                &span,
                format!("`{key}` in {} {rule}, found {x}", sec.label),
            ))
        }
    }

    /// A whole number in `lo..=hi` (an integral float such as `10.0` is
    /// accepted).
    pub(crate) fn integer(&mut self, sec: &Section<'_>, key: &str, lo: i64, hi: i64) -> Field<i64> {
        let Some(v) = self.value(sec, key, "a whole number")? else {
            return Ok(None);
        };
        let n = match v {
            Value::Integer(i) => *i.value(),
            Value::Float(f) if f.value().fract() == 0.0 && f.value().abs() < 9e15 => {
                *f.value() as i64
            }
            _ => return Err(self.wrong_value_type(sec, key, v, "a whole number")),
        };
        if n < lo || n > hi {
            let range = if hi == i64::MAX {
                format!("at least {lo}")
            } else {
                format!("from {lo} to {hi}")
            };
            return Err(self.error(
                ErrorKind::OutOfRange,
                &v.span(),
                format!("`{key}` in {} must be {range}, found {n}", sec.label),
            ));
        }
        Ok(Some(n))
    }

    pub(crate) fn boolean(&mut self, sec: &Section<'_>, key: &str) -> Field<bool> {
        let Some(v) = self.value(sec, key, "true or false")? else {
            return Ok(None);
        };
        match v.as_bool() {
            Some(b) => Ok(Some(b)),
            None => Err(self.wrong_value_type(sec, key, v, "true or false")),
        }
    }

    pub(crate) fn string<'t>(&mut self, sec: &Section<'t>, key: &str) -> Field<&'t str> {
        let Some(v) = self.value(sec, key, "a string")? else {
            return Ok(None);
        };
        match v.as_str() {
            Some(s) => Ok(Some(s)),
            None => Err(self.wrong_value_type(sec, key, v, "a string")),
        }
    }

    /// One of the `choices`, suggesting the nearest on a typo.
    pub(crate) fn choice<'c>(
        &mut self,
        sec: &Section<'_>,
        key: &str,
        choices: &[&'c str],
    ) -> Field<&'c str> {
        let Some(s) = self.string(sec, key)? else {
            return Ok(None);
        };
        if let Some(c) = choices.iter().find(|c| **c == s) {
            return Ok(Some(c));
        }
        let span = self.span_of(sec, key);
        let hint = suggest::did_you_mean(s, choices.iter().copied());
        let list = choices
            .iter()
            .map(|c| format!("\"{c}\""))
            .collect::<Vec<_>>()
            .join(", ");
        Err(self.error(
            ErrorKind::OutOfRange,
            &span,
            format!(
                "`{key}` in {} is \"{s}\", which is not one of {list}{hint}",
                sec.label
            ),
        ))
    }

    /// A point `[x, y]` of finite numbers.
    pub(crate) fn point(&mut self, sec: &Section<'_>, key: &str) -> Field<Point> {
        let Some(v) = self.value(sec, key, "a point [x, y]")? else {
            return Ok(None);
        };
        let label = format!("`{key}` in {}", sec.label);
        self.point_value(v, &label).map(Some)
    }

    pub(crate) fn point_value(&mut self, v: &Value, label: &str) -> Result<Point, Reported> {
        let Some(array) = v.as_array() else {
            return Err(self.error(
                ErrorKind::WrongType,
                &v.span(),
                format!("{label} must be a point [x, y], found {}", v.type_name()),
            ));
        };
        if array.len() != 2 {
            return Err(self.error(
                ErrorKind::WrongType,
                &v.span(),
                format!(
                    "{label} must be a point [x, y] with 2 numbers, found {} values",
                    array.len()
                ),
            ));
        }
        let mut p = [0.0; 2];
        for (k, e) in array.iter().enumerate() {
            p[k] = self.number_value(e, label)?;
        }
        Ok(p)
    }

    fn number_value(&mut self, e: &Value, label: &str) -> Result<f64, Reported> {
        let x = match e {
            Value::Integer(i) => *i.value() as f64,
            Value::Float(f) => *f.value(),
            other => {
                return Err(self.error(
                    ErrorKind::WrongType,
                    &other.span(),
                    format!("{label} must hold numbers, found {}", other.type_name()),
                ))
            }
        };
        if !x.is_finite() {
            return Err(self.error(
                ErrorKind::OutOfRange,
                &e.span(),
                format!("{label} must hold finite numbers, found {x}"),
            ));
        }
        Ok(x)
    }

    /// An array of finite numbers.
    pub(crate) fn numbers(&mut self, sec: &Section<'_>, key: &str) -> Field<Vec<f64>> {
        let Some(v) = self.value(sec, key, "an array of numbers")? else {
            return Ok(None);
        };
        let label = format!("`{key}` in {}", sec.label);
        let Some(array) = v.as_array() else {
            return Err(self.wrong_value_type(sec, key, v, "an array of numbers"));
        };
        let mut out = Vec::with_capacity(array.len());
        let mut bad = false;
        for e in array.iter() {
            match self.number_value(e, &label) {
                Ok(x) => out.push(x),
                Err(_) => bad = true,
            }
        }
        if bad {
            Err(Reported)
        } else {
            Ok(Some(out))
        }
    }

    /// An array of points `[[x, y], ...]`.
    pub(crate) fn points(&mut self, sec: &Section<'_>, key: &str) -> Field<Vec<Point>> {
        let Some(v) = self.value(sec, key, "an array of points [[x, y], ...]")? else {
            return Ok(None);
        };
        let label = format!("`{key}` in {}", sec.label);
        let Some(array) = v.as_array() else {
            return Err(self.wrong_value_type(sec, key, v, "an array of points [[x, y], ...]"));
        };
        let mut out = Vec::with_capacity(array.len());
        let mut bad = false;
        for e in array.iter() {
            match self.point_value(e, &label) {
                Ok(p) => out.push(p),
                Err(_) => bad = true,
            }
        }
        if bad {
            Err(Reported)
        } else {
            Ok(Some(out))
        }
    }

    /// An array of strings.
    pub(crate) fn strings<'t>(
        &mut self,
        sec: &Section<'t>,
        key: &str,
    ) -> Field<Vec<(&'t str, Span)>> {
        let Some(v) = self.value(sec, key, "an array of names")? else {
            return Ok(None);
        };
        let Some(array) = v.as_array() else {
            // A single name is accepted as a one-name list.
            if let Some(s) = v.as_str() {
                return Ok(Some(vec![(s, v.span())]));
            }
            return Err(self.wrong_value_type(sec, key, v, "an array of names"));
        };
        let mut out = Vec::new();
        let mut bad = false;
        for e in array.iter() {
            match e.as_str() {
                Some(s) => out.push((s, e.span())),
                None => {
                    self.error(
                        ErrorKind::WrongType,
                        &e.span(),
                        format!(
                            "`{key}` in {} must hold names (strings), found {}",
                            sec.label,
                            e.type_name()
                        ),
                    );
                    bad = true;
                }
            }
        }
        if bad {
            Err(Reported)
        } else {
            Ok(Some(out))
        }
    }

    fn wrong_value_type(
        &mut self,
        sec: &Section<'_>,
        key: &str,
        v: &Value,
        expected: &str,
    ) -> Reported {
        self.error(
            ErrorKind::WrongType,
            &v.span(),
            format!(
                "`{key}` in {} must be {expected}, found {}",
                sec.label,
                v.type_name()
            ),
        )
    }

    /// The span of a key's value (or of the key).
    pub(crate) fn span_of(&self, sec: &Section<'_>, key: &str) -> Span {
        sec.table
            .get(key)
            .and_then(Item::span)
            .or_else(|| key_span(sec, key))
            .or_else(|| sec.span.clone())
    }
}

pub(crate) fn key_span(sec: &Section<'_>, key: &str) -> Span {
    sec.table.key(key).and_then(|k| k.span())
}

/// Where a key of the format lives, for "belongs in" hints.
fn home_of_key(key: &str) -> Option<&'static str> {
    Some(match key {
        "title" | "symmetry" | "depth" | "length_unit" | "element_order" => "[model]",
        "max_size" | "min_angle" | "growth" | "adapt" | "target_error" => "[mesh]",
        "relative_permeability"
        | "bh_curve"
        | "bh_curve_file"
        | "stacking_factor"
        | "remanence"
        | "from_library" => "[materials.NAME]",
        "turns" => "[windings.NAME]",
        "material"
        | "mesh_size"
        | "winding"
        | "direction"
        | "magnetization_angle"
        | "translate"
        | "rotate"
        | "rotate_about"
        | "repeat" => "[[shape]]",
        "condition" | "field" => "[outer] or [[edge]]",
        "samples" => "[[profile]]",
        "method" => "[[force]]",
        _ => return None,
    })
}
