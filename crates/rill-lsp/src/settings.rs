//! The `rill` settings section, from `initializationOptions` and
//! `workspace/didChangeConfiguration`:
//! `{ "inlayHints": { "enabled": bool }, "allowedIncludePaths": [..], "runOutputDir": string|null }`.

use serde::Deserialize;
use serde_json::Value;
use std::path::{Path, PathBuf};

#[derive(Debug, Clone, PartialEq, Default, Deserialize)]
#[serde(rename_all = "camelCase", default)]
/// The server's settings (section `rill`, or `initializationOptions`).
pub struct Settings {
    /// Inlay hints (computed values at the end of lines).
    pub inlay_hints: InlayHints,
    /// Folders outside the workspace whose files includes and arrays may read.
    pub allowed_include_paths: Vec<String>,
    /// Where `rill.run` puts `<deck name>.out/`; beside the deck when unset.
    pub run_output_dir: Option<String>,
}

#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(rename_all = "camelCase", default)]
/// The inlay-hint settings.
pub struct InlayHints {
    /// Whether hints are sent at all (default true).
    pub enabled: bool,
}

impl Default for InlayHints {
    fn default() -> Self {
        InlayHints { enabled: true }
    }
}

impl Settings {
    /// Read settings from a JSON value that is either the `rill` section
    /// itself or an object holding it under `"rill"`. `None` when the value
    /// says nothing about rill (e.g. `null` from a client that expects the
    /// server to pull the configuration); invalid fields fall back to their
    /// defaults one by one rather than discarding the whole section.
    pub fn from_json(value: &Value) -> Option<Settings> {
        let section = match value {
            Value::Object(map) => match map.get("rill") {
                Some(inner @ Value::Object(_)) => inner,
                Some(_) => return None,
                None if map.is_empty() => return None,
                None => value,
            },
            _ => return None,
        };
        let mut s = Settings::default();
        if let Some(enabled) = section
            .get("inlayHints")
            .and_then(|h| h.get("enabled"))
            .and_then(Value::as_bool)
        {
            s.inlay_hints.enabled = enabled;
        }
        if let Some(list) = section.get("allowedIncludePaths").and_then(Value::as_array) {
            s.allowed_include_paths = list
                .iter()
                .filter_map(Value::as_str)
                .map(str::to_string)
                .collect();
        }
        s.run_output_dir = section
            .get("runOutputDir")
            .and_then(Value::as_str)
            .filter(|d| !d.trim().is_empty())
            .map(str::to_string);
        Some(s)
    }

    /// Allowed folders as absolute paths; relative ones are taken from `base`
    /// (the first workspace folder).
    pub fn allowed_paths(&self, base: Option<&Path>) -> Vec<PathBuf> {
        self.allowed_include_paths
            .iter()
            .map(|p| absolute(p, base))
            .collect()
    }

    /// The results folder for the deck at `deck`.
    pub fn output_dir(&self, deck: &Path, base: Option<&Path>) -> PathBuf {
        let name = deck
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "deck".into());
        let parent = match &self.run_output_dir {
            Some(dir) => absolute(dir, base.or(deck.parent())),
            None => deck.parent().map(Path::to_path_buf).unwrap_or_default(),
        };
        parent.join(format!("{name}.out"))
    }
}

fn absolute(p: &str, base: Option<&Path>) -> PathBuf {
    let p = Path::new(p);
    match base {
        Some(b) if p.is_relative() => rill_model::source::normalize(&b.join(p)),
        _ => rill_model::source::normalize(p),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn section_alone_or_under_rill() {
        let inner = json!({"inlayHints": {"enabled": false}, "allowedIncludePaths": ["/data"], "runOutputDir": "runs"});
        let a = Settings::from_json(&inner).unwrap();
        let b = Settings::from_json(&json!({ "rill": inner })).unwrap();
        assert_eq!(a, b);
        assert!(!a.inlay_hints.enabled);
        assert_eq!(a.allowed_include_paths, vec!["/data".to_string()]);
        assert_eq!(a.run_output_dir.as_deref(), Some("runs"));
    }

    #[test]
    fn nothing_said_and_bad_fields() {
        assert_eq!(Settings::from_json(&Value::Null), None);
        assert_eq!(Settings::from_json(&json!({})), None);
        let s = Settings::from_json(&json!({"inlayHints": 3, "runOutputDir": null})).unwrap();
        assert_eq!(s, Settings::default());
    }

    #[test]
    fn output_dir_beside_the_deck_or_under_the_setting() {
        let deck = Path::new("/w/cases/pilot.rill");
        let s = Settings::default();
        assert_eq!(
            s.output_dir(deck, Some(Path::new("/w"))),
            PathBuf::from("/w/cases/pilot.out")
        );
        let s = Settings {
            run_output_dir: Some("results".into()),
            ..Settings::default()
        };
        assert_eq!(
            s.output_dir(deck, Some(Path::new("/w"))),
            PathBuf::from("/w/results/pilot.out")
        );
        assert_eq!(
            s.allowed_paths(Some(Path::new("/w"))),
            Vec::<PathBuf>::new()
        );
    }
}
