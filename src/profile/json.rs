//! A JSON value with its path, for validation with exact error locations.
//!
//! Owns: walking a `serde_json::Value` while tracking the path
//! (`grid.R.cells`), typed accessors whose errors name the path, what was
//! expected and what was found, and the unknown-key check with the closest
//! allowed key. Does not own: what the keys mean.

use serde_json::{Map, Value};

use super::ProfileError;
use crate::formula::{parse_with_names, Expr};

/// A JSON node and the path that leads to it.
#[derive(Clone, Copy)]
pub struct Node<'a> {
    /// The value.
    pub value: &'a Value,
    path: &'a str,
    file: &'a str,
}

/// Either a number or a formula text, as profiles allow for most values.
#[derive(Clone, Debug)]
pub enum NumberOrFormula {
    /// A literal number.
    Number(f64),
    /// A formula.
    Formula(Expr),
}

impl<'a> Node<'a> {
    /// The root node of a file.
    pub fn root(value: &'a Value, file: &'a str) -> Node<'a> {
        Node {
            value,
            path: "",
            file,
        }
    }

    /// The path of this node (`grid.R.cells`), or `(top level)`.
    pub fn path(&self) -> String {
        if self.path.is_empty() {
            "(top level)".to_string()
        } else {
            self.path.to_string()
        }
    }

    /// An error at this node.
    pub fn error(&self, message: impl Into<String>) -> ProfileError {
        ProfileError::at(self.file, &self.path(), message)
    }

    /// The object's map, or an error.
    pub fn object(&self) -> Result<&'a Map<String, Value>, ProfileError> {
        self.value
            .as_object()
            .ok_or_else(|| self.expected("an object"))
    }

    /// "expected X, found Y".
    pub fn expected(&self, what: &str) -> ProfileError {
        self.error(format!("expected {what}, found {}", describe(self.value)))
    }

    /// Reject keys not in `allowed`, naming the closest allowed key.
    pub fn only_keys(&self, allowed: &[&str]) -> Result<(), ProfileError> {
        for key in self.object()?.keys() {
            if !allowed.contains(&key.as_str()) {
                let hint = closest(key, allowed)
                    .map(|k| format!(" (did you mean `{k}`?)"))
                    .unwrap_or_else(|| format!("; allowed keys: {}", allowed.join(", ")));
                return Err(ProfileError::at(
                    self.file,
                    &join(self.path, key),
                    format!("unknown key `{key}`{hint}"),
                ));
            }
        }
        Ok(())
    }

    /// A child node that may not be present, with its path owned elsewhere.
    pub fn child(&self, key: &str) -> Option<OwnedNode<'a>> {
        let v = self.value.get(key)?;
        if v.is_null() {
            return None;
        }
        Some(OwnedNode {
            value: v,
            path: join(self.path, key),
            file: self.file,
        })
    }

    /// A required child.
    pub fn require(&self, key: &str) -> Result<OwnedNode<'a>, ProfileError> {
        self.child(key).ok_or_else(|| {
            ProfileError::at(self.file, &join(self.path, key), "this key is required")
        })
    }

    /// A string.
    pub fn str(&self) -> Result<&'a str, ProfileError> {
        self.value.as_str().ok_or_else(|| self.expected("a string"))
    }

    /// One of a fixed set of strings.
    pub fn choice<T: Copy>(&self, options: &[(T, &str)]) -> Result<T, ProfileError> {
        let s = self.str()?;
        options
            .iter()
            .find(|(_, k)| *k == s)
            .map(|(t, _)| *t)
            .ok_or_else(|| {
                let keys: Vec<&str> = options.iter().map(|(_, k)| *k).collect();
                let hint = closest(s, &keys)
                    .map(|k| format!(" (did you mean `{k}`?)"))
                    .unwrap_or_default();
                self.error(format!(
                    "expected one of {}, found \"{s}\"{hint}",
                    keys.join(", ")
                ))
            })
    }

    /// A boolean.
    pub fn bool(&self) -> Result<bool, ProfileError> {
        self.value
            .as_bool()
            .ok_or_else(|| self.expected("true or false"))
    }

    /// A positive integer.
    pub fn positive_int(&self) -> Result<usize, ProfileError> {
        match self.value.as_u64() {
            Some(n) if n > 0 => Ok(n as usize),
            _ => Err(self.expected("a positive integer")),
        }
    }

    /// A number or a formula over `known` names.
    pub fn number_or_formula(&self, known: &[&str]) -> Result<NumberOrFormula, ProfileError> {
        if let Some(x) = self.value.as_f64() {
            return Ok(NumberOrFormula::Number(x));
        }
        let text = self
            .value
            .as_str()
            .ok_or_else(|| self.expected("a number or a formula"))?;
        Ok(NumberOrFormula::Formula(self.formula_text(text, known)?))
    }

    /// A formula over `known` names (a JSON number is taken as a constant).
    pub fn formula(&self, known: &[&str]) -> Result<Expr, ProfileError> {
        match self.number_or_formula(known)? {
            NumberOrFormula::Number(x) => Ok(Expr::num(x)),
            NumberOrFormula::Formula(e) => Ok(e),
        }
    }

    fn formula_text(&self, text: &str, known: &[&str]) -> Result<Expr, ProfileError> {
        parse_with_names(text, known).map_err(|e| {
            let mut err = self.error(e.to_string());
            // The formula and the caret line; the message is already in
            // the error's header.
            let rendered = e.render(text);
            err.detail = Some(rendered.lines().take(2).collect::<Vec<_>>().join("\n"));
            err
        })
    }

    /// A number, possibly written as a formula of the resolved parameters.
    pub fn value(
        &self,
        known: &[&str],
        lookup: &dyn Fn(&str) -> Option<f64>,
    ) -> Result<f64, ProfileError> {
        let v = match self.number_or_formula(known)? {
            NumberOrFormula::Number(x) => x,
            NumberOrFormula::Formula(e) => e.eval(lookup).map_err(|e| self.error(e.to_string()))?,
        };
        if v.is_finite() {
            Ok(v)
        } else {
            Err(self.error(format!("evaluates to {v}, expected a finite number")))
        }
    }

    /// Array elements with their paths.
    pub fn array(&self) -> Result<Vec<OwnedNode<'a>>, ProfileError> {
        let a = self
            .value
            .as_array()
            .ok_or_else(|| self.expected("an array"))?;
        Ok(a.iter()
            .enumerate()
            .map(|(i, v)| OwnedNode {
                value: v,
                path: format!("{}[{i}]", self.path),
                file: self.file,
            })
            .collect())
    }
}

/// A node whose path string it owns (children are built on the fly).
pub struct OwnedNode<'a> {
    value: &'a Value,
    path: String,
    file: &'a str,
}

impl<'a> OwnedNode<'a> {
    /// Borrow as a [`Node`].
    pub fn node(&self) -> Node<'_> {
        Node {
            value: self.value,
            path: &self.path,
            file: self.file,
        }
    }
}

fn join(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

/// A short description of a JSON value for "found ..." messages.
pub fn describe(v: &Value) -> String {
    match v {
        Value::Null => "null".into(),
        Value::Bool(b) => b.to_string(),
        Value::Number(n) => n.to_string(),
        Value::String(s) if s.len() > 40 => {
            format!("a string \"{}…\"", s.chars().take(40).collect::<String>())
        }
        Value::String(s) => format!("\"{s}\""),
        Value::Array(_) => "an array".into(),
        Value::Object(_) => "an object".into(),
    }
}

/// The closest candidate by edit distance, when reasonably close.
pub fn closest<'k>(word: &str, candidates: &[&'k str]) -> Option<&'k str> {
    candidates
        .iter()
        .map(|c| (levenshtein(&word.to_lowercase(), &c.to_lowercase()), *c))
        .filter(|(d, c)| *d <= 2.max(c.len() / 3))
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}

fn levenshtein(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            cur[j + 1] = (prev[j] + usize::from(ca != *cb))
                .min(prev[j + 1] + 1)
                .min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}
