//! What the window remembers between runs: recent sources, the theme, the
//! window's size and the Field tree's width, in one small JSON file
//! (`$XDG_CONFIG_HOME/plumbline/window.json`, else `~/.config/…`). Only
//! paths and sizes are kept, never data from the sources. A missing or
//! unreadable file means defaults; nothing fails because of it.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

/// Recent sources kept.
pub const RECENT: usize = 10;

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Settings {
    /// Most recent first.
    pub recent: Vec<PathBuf>,
    pub dark: Option<bool>,
    /// Inner size of the window, in points.
    pub window: Option<[f32; 2]>,
    pub tree_width: Option<f32>,
}

impl Settings {
    /// The usual place of the settings file.
    pub fn default_file() -> Option<PathBuf> {
        let base = std::env::var_os("XDG_CONFIG_HOME")
            .filter(|v| !v.is_empty())
            .map(PathBuf::from)
            .or_else(|| std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".config")))?;
        Some(base.join("plumbline").join("window.json"))
    }

    pub fn load(file: &Path) -> Settings {
        std::fs::read(file).ok().and_then(|bytes| serde_json::from_slice(&bytes).ok()).unwrap_or_default()
    }

    /// Writes the file (atomically); errors are returned for the caller to show.
    pub fn save(&self, file: &Path) -> Result<(), String> {
        if let Some(dir) = file.parent() {
            std::fs::create_dir_all(dir).map_err(|e| format!("{}: {e}", dir.display()))?;
        }
        let json = serde_json::to_vec_pretty(self).map_err(|e| e.to_string())?;
        crate::report::write::write_atomically(file, &json, true).map_err(|e| e.to_string())
    }

    /// Puts `path` first among the recent sources.
    pub fn remember(&mut self, path: &Path) {
        let path = std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
        self.recent.retain(|p| *p != path);
        self.recent.insert(0, path);
        self.recent.truncate(RECENT);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn settings_round_trip_and_recent_sources_stay_unique_and_few() {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("sub").join("window.json");
        assert_eq!(Settings::load(&file), Settings::default(), "missing file: defaults");
        let mut s = Settings { dark: Some(false), window: Some([900.0, 600.0]), tree_width: Some(350.0), ..Default::default() };
        for i in 0..12 {
            s.remember(Path::new(&format!("/nowhere/{i}.parquet")));
        }
        s.remember(Path::new("/nowhere/5.parquet"));
        assert_eq!(s.recent.len(), RECENT);
        assert_eq!(s.recent[0], Path::new("/nowhere/5.parquet"));
        assert_eq!(s.recent.iter().filter(|p| p.ends_with("5.parquet")).count(), 1);
        s.save(&file).unwrap();
        assert_eq!(Settings::load(&file), s);
        std::fs::write(&file, b"{ not json").unwrap();
        assert_eq!(Settings::load(&file), Settings::default(), "a broken file: defaults");
    }
}
