//! Parameter resolution: parameters defined as formulas of each other are
//! evaluated in dependency order; a cycle is reported in order
//! (`a -> b -> a`), an undefined name with the closest defined one.

use super::hints::suggest;
use super::{Expr, FormulaError};
use std::collections::{BTreeSet, HashMap};

/// Resolve `defs` (in any order) to numbers, in the order given.
pub(crate) fn resolve(
    defs: &[(String, Expr)],
    constants: &[(String, f64)],
) -> Result<Vec<(String, f64)>, FormulaError> {
    let index: HashMap<&str, usize> = defs
        .iter()
        .enumerate()
        .map(|(i, (n, _))| (n.as_str(), i))
        .collect();
    let consts: HashMap<&str, f64> = constants.iter().map(|(n, v)| (n.as_str(), *v)).collect();
    // Dependencies on other parameters, checking that every name exists.
    let mut deps: Vec<Vec<usize>> = Vec::with_capacity(defs.len());
    for (_, e) in defs {
        let mut d = Vec::new();
        for used in e.names() {
            if let Some(&j) = index.get(used.as_str()) {
                d.push(j);
            } else if !consts.contains_key(used.as_str()) {
                let candidates: BTreeSet<&str> =
                    index.keys().chain(consts.keys()).copied().collect();
                return Err(FormulaError::UnknownName {
                    suggestion: suggest(&used, candidates.into_iter()),
                    name: used,
                    span: 0..0,
                });
            }
        }
        d.sort_unstable();
        deps.push(d);
    }
    // Depth-first topological order with cycle extraction.
    #[derive(Clone, Copy, PartialEq)]
    enum Mark {
        New,
        Active,
        Done,
    }
    let mut mark = vec![Mark::New; defs.len()];
    let mut order = Vec::with_capacity(defs.len());
    for root in 0..defs.len() {
        if mark[root] != Mark::New {
            continue;
        }
        // Stack of (node, next dependency to visit).
        let mut stack = vec![(root, 0usize)];
        mark[root] = Mark::Active;
        while let Some(&mut (node, ref mut next)) = stack.last_mut() {
            if let Some(&dep) = deps[node].get(*next) {
                *next += 1;
                match mark[dep] {
                    Mark::New => {
                        mark[dep] = Mark::Active;
                        stack.push((dep, 0));
                    }
                    Mark::Active => {
                        let from = stack.iter().position(|(n, _)| *n == dep).unwrap_or(0);
                        let mut cycle: Vec<String> = stack[from..]
                            .iter()
                            .map(|(n, _)| defs[*n].0.clone())
                            .collect();
                        cycle.push(defs[dep].0.clone());
                        return Err(FormulaError::Cycle { cycle });
                    }
                    Mark::Done => {}
                }
            } else {
                mark[node] = Mark::Done;
                order.push(node);
                stack.pop();
            }
        }
    }
    let mut values: Vec<Option<f64>> = vec![None; defs.len()];
    for i in order {
        let v = defs[i].1.eval(&|n| match index.get(n) {
            Some(&j) => values[j],
            None => consts.get(n).copied(),
        })?;
        values[i] = Some(v);
    }
    Ok(defs
        .iter()
        .zip(values)
        .map(|((n, _), v)| (n.clone(), v.unwrap_or(f64::NAN)))
        .collect())
}

/// The parameter whose formula uses `name` without it being defined, for
/// messages that say where an [`FormulaError::UnknownName`] came from.
pub fn parameter_using(defs: &[(String, Expr)], name: &str) -> Option<String> {
    defs.iter()
        .find(|(_, e)| e.names().contains(name))
        .map(|(n, _)| n.clone())
}

#[cfg(test)]
mod tests {
    use super::super::{parse, resolve_parameters};
    use super::*;

    fn defs(list: &[(&str, &str)]) -> Vec<(String, Expr)> {
        list.iter()
            .map(|(n, s)| (n.to_string(), parse(s).unwrap()))
            .collect()
    }

    #[test]
    fn resolves_in_dependency_order() {
        let d = defs(&[("c", "a + b"), ("a", "2*G"), ("b", "a^2")]);
        let r = resolve_parameters(&d, &[("G".into(), 3.0)]).unwrap();
        assert_eq!(r[0].0, "c");
        assert!((r[0].1 - 42.0).abs() < 1e-12);
        assert!((r[2].1 - 36.0).abs() < 1e-12);
    }

    #[test]
    fn cycles_are_named_in_order() {
        let d = defs(&[("x", "1"), ("a", "b + x"), ("b", "c*2"), ("c", "a - 1")]);
        let e = resolve_parameters(&d, &[]).unwrap_err();
        assert_eq!(
            e,
            FormulaError::Cycle {
                cycle: vec!["a".into(), "b".into(), "c".into(), "a".into()]
            }
        );
        assert_eq!(
            e.to_string(),
            "parameters depend on each other in a cycle: a -> b -> c -> a"
        );
        let e = resolve_parameters(&defs(&[("s", "s + 1")]), &[]).unwrap_err();
        assert_eq!(
            e,
            FormulaError::Cycle {
                cycle: vec!["s".into(), "s".into()]
            }
        );
    }

    #[test]
    fn unknown_names_suggest_and_locate() {
        let d = defs(&[("rho0", "1"), ("r_in", "rh0 * 2")]);
        let e = resolve_parameters(&d, &[]).unwrap_err();
        assert_eq!(
            e,
            FormulaError::UnknownName {
                name: "rh0".into(),
                span: 0..0,
                suggestion: Some("rho0".into())
            }
        );
        assert_eq!(parameter_using(&d, "rh0").as_deref(), Some("r_in"));
    }
}
