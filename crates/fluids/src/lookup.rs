//! Name lookup: every id, display name, ASHRAE number, chemical name, CAS number and alias
//! of every fluid, compared case- and punctuation-insensitively.

use crate::error::Problem;
use crate::record::FluidRecord;
use std::collections::HashMap;

/// The lookup key of a name: lowercase, with everything but letters and digits dropped, so
/// that `R-134a`, `r134a` and `R 134A` are one key.
pub fn normalize(name: &str) -> String {
    name.chars()
        .filter(|c| c.is_alphanumeric())
        .flat_map(char::to_lowercase)
        .collect()
}

/// Every name of `fluid` that resolves to it, with the field it comes from, in the order
/// that decides which text a suggestion shows when two names share a key (display name,
/// ASHRAE number and aliases before the id). The formula is not one of them: formulas are
/// ambiguous between isomers.
pub(crate) fn names_of(fluid: &FluidRecord) -> Vec<(String, String)> {
    let mut out = vec![("name".to_string(), fluid.name.clone())];
    out.extend(
        fluid
            .ashrae_number
            .iter()
            .map(|n| ("ashrae_number".to_string(), n.clone())),
    );
    out.extend(
        fluid
            .aliases
            .iter()
            .enumerate()
            .map(|(i, a)| (format!("aliases[{i}]"), a.clone())),
    );
    out.extend(
        fluid
            .chemical_name
            .iter()
            .map(|n| ("chemical_name".to_string(), n.clone())),
    );
    out.push(("id".to_string(), fluid.id.clone()));
    out.extend(fluid.cas.iter().map(|n| ("cas".to_string(), n.clone())));
    out
}

/// Normalized name -> position of the fluid in the catalogue.
#[derive(Debug, Clone, Default)]
pub(crate) struct NameIndex {
    map: HashMap<String, usize>,
    /// (normalized key, name as written) for suggestions.
    labels: Vec<(String, String, usize)>,
}

impl NameIndex {
    /// Adds `names` (field, name) of the fluid labelled `fluid` at position `position`. A
    /// name that already belongs to another fluid is reported and not added; the caller
    /// decides what a report means (a defect of built-in data, or a rejected user file).
    /// `ids[i]` names the fluid at position `i` in messages.
    pub(crate) fn add(
        &mut self,
        fluid: &str,
        names: &[(String, String)],
        position: usize,
        ids: &[&str],
    ) -> Vec<Problem> {
        let mut problems = Vec::new();
        for (field, label) in names {
            let (field, label) = (field.clone(), label.as_str());
            let key = normalize(label);
            if key.is_empty() {
                problems.push(Problem {
                    fluid: fluid.to_string(),
                    field,
                    value: format!("\"{label}\""),
                    expected: "a name with at least one letter or digit".into(),
                });
                continue;
            }
            match self.map.get(&key) {
                Some(&owner) if owner != position => problems.push(Problem {
                    fluid: fluid.to_string(),
                    field,
                    value: format!("\"{label}\""),
                    expected: format!(
                        "a name not already used: it matches a name of the fluid `{}` \
                         (names compare ignoring case and punctuation)",
                        ids[owner]
                    ),
                }),
                Some(_) => {}
                None => {
                    self.map.insert(key.clone(), position);
                    self.labels.push((key, label.to_string(), position));
                }
            }
        }
        problems
    }

    /// The fluid position for `name`, if any.
    pub(crate) fn find(&self, name: &str) -> Option<usize> {
        self.map.get(&normalize(name)).copied()
    }

    /// Up to `n` names closest to `name` (Damerau-Levenshtein distance between normalized
    /// keys), at most one per fluid, closest first.
    pub(crate) fn suggestions(&self, name: &str, n: usize) -> Vec<String> {
        let key = normalize(name);
        let mut best: HashMap<usize, (usize, &str)> = HashMap::new();
        for (k, label, position) in &self.labels {
            let d = strsim::damerau_levenshtein(&key, k);
            let entry = best.entry(*position).or_insert((d, label));
            if (d, label.as_str()) < *entry {
                *entry = (d, label);
            }
        }
        let mut ranked: Vec<(usize, &str)> = best.into_values().collect();
        ranked.sort();
        ranked
            .into_iter()
            .take(n)
            .map(|(_, label)| label.to_string())
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::normalize;

    #[test]
    fn normalization_drops_case_and_punctuation() {
        assert_eq!(normalize("R-134a"), "r134a");
        assert_eq!(
            normalize("1,1,1,2-Tetrafluoroethane"),
            "1112tetrafluoroethane"
        );
        assert_eq!(normalize("R-1234ze(E)"), "r1234zee");
        assert_eq!(normalize(" -- "), "");
    }
}
