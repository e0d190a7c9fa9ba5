//! The shared session every screen controller works over: the operator's preferences
//! (language, units, contrast, initials), the site profiles and the chosen site and tap, the
//! data directory, and the one way the app writes its own small files there.
//!
//! Design choice: the screen controllers (`calc_screen`, `log_screen`, `site_editor`, `plots`)
//! each own only their screen's state and borrow the session for what they share, so no
//! controller reaches into another's fields. The session writes only preferences and site
//! profiles, always whole (`files::write_whole`: temporary file + rename); dose records are the
//! log's alone.

use super::numbers::Lang;
use super::sites::{self, LegacySite};
use crate::engine::dosing::catalog::Catalog;
use crate::engine::dosing::site::SiteProfile;
use crate::engine::quantity::UnitSystem;
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};

/// Where the preferences are kept, in the data directory.
pub const SETTINGS_FILE: &str = "settings.json";

/// What the operator chose in Settings; saved between runs in `settings.json`. The site
/// profiles themselves are kept in `sites.json` (see [`super::sites`]); `sites` is filled from
/// there on start and never written into this file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Settings {
    pub lang: String,
    pub us_units: bool,
    pub high_contrast: bool,
    #[serde(skip)]
    pub sites: Vec<SiteProfile>,
    /// Sites as the first versions saved them here (`{name, points}`): read once, migrated.
    #[serde(rename = "sites", skip_serializing)]
    legacy_sites: Vec<LegacySite>,
    pub site_index: usize,
    pub point_index: usize,
    /// Operator initials, remembered so logging a dose is one tap.
    pub initials: String,
}

impl Default for Settings {
    fn default() -> Settings {
        Settings {
            lang: "en".into(),
            us_units: true,
            high_contrast: false,
            sites: Vec::new(),
            legacy_sites: Vec::new(),
            site_index: 0,
            point_index: 0,
            initials: String::new(),
        }
    }
}

/// A short message for the operator: a translation key and its arguments.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Note {
    pub key: String,
    pub args: Vec<(&'static str, String)>,
    /// Arguments that are phrases of their own (a date span inside the export message):
    /// translated first, then passed in, so each language words the whole sentence.
    pub parts: Vec<(&'static str, Note)>,
}

impl Note {
    pub(crate) fn new(key: &str) -> Note {
        Note {
            key: key.into(),
            args: Vec::new(),
            parts: Vec::new(),
        }
    }

    pub(crate) fn arg(mut self, name: &'static str, value: impl ToString) -> Note {
        self.args.push((name, value.to_string()));
        self
    }

    pub(crate) fn part(mut self, name: &'static str, phrase: Note) -> Note {
        self.parts.push((name, phrase));
        self
    }
}

/// The preferences, the sites and the data directory, shared by every screen.
pub struct Session {
    pub settings: Settings,
    data_dir: Option<PathBuf>,
    catalog: Option<Catalog>,
}

impl Session {
    /// Reads the saved settings and site profiles from `data_dir` when there are any; old
    /// `{name, points}` sites are migrated and written at once, so they are read one time.
    pub fn open(data_dir: Option<PathBuf>, lang_override: Option<Lang>) -> Session {
        let mut settings = data_dir
            .as_ref()
            .and_then(|d| std::fs::read_to_string(d.join(SETTINGS_FILE)).ok())
            .and_then(|t| serde_json::from_str::<Settings>(&t).ok())
            .unwrap_or_default();
        if let Some(lang) = lang_override {
            settings.lang = lang.tag().into();
        }
        let system = if settings.us_units {
            UnitSystem::Us
        } else {
            UnitSystem::Si
        };
        let catalog = Catalog::builtin().ok();
        let legacy = std::mem::take(&mut settings.legacy_sites);
        settings.sites = sites::load(data_dir.as_deref(), &legacy, system, catalog.as_ref());
        let migrated = !legacy.is_empty()
            && data_dir
                .as_ref()
                .is_some_and(|d| !d.join(sites::SITES_FILE).exists());
        let session = Session {
            settings,
            data_dir,
            catalog,
        };
        if migrated {
            session.save();
        }
        session
    }

    pub fn lang(&self) -> Lang {
        Lang::from_tag(&self.settings.lang).unwrap_or(Lang::En)
    }

    pub fn units(&self) -> UnitSystem {
        if self.settings.us_units {
            UnitSystem::Us
        } else {
            UnitSystem::Si
        }
    }

    pub fn data_dir(&self) -> Option<&Path> {
        self.data_dir.as_deref()
    }

    pub fn catalog(&self) -> Option<&Catalog> {
        self.catalog.as_ref()
    }

    /// The chosen site (the list is never empty: a fresh start has the demo plant).
    pub fn site(&self) -> &SiteProfile {
        &self.settings.sites[self.site_index()]
    }

    pub fn site_mut(&mut self) -> &mut SiteProfile {
        let i = self.site_index();
        &mut self.settings.sites[i]
    }

    /// The chosen site to edit, with the catalog its edits are validated against.
    pub fn site_and_catalog(&mut self) -> (&mut SiteProfile, Option<&Catalog>) {
        let i = self.site_index();
        (&mut self.settings.sites[i], self.catalog.as_ref())
    }

    fn site_index(&self) -> usize {
        self.settings.site_index.min(self.settings.sites.len() - 1)
    }

    /// The selected sampling tap's name: what the log records as the dose's point.
    pub fn point(&self) -> Option<&str> {
        self.site()
            .sampling_taps
            .get(self.settings.point_index)
            .map(|t| t.name.as_str())
    }

    /// The tap names, in the picker's order.
    pub fn taps(&self) -> Vec<String> {
        self.site()
            .sampling_taps
            .iter()
            .map(|t| t.name.clone())
            .collect()
    }

    pub fn initials(&self) -> &str {
        &self.settings.initials
    }

    /// Keeps up to 8 letters or digits, upper-cased, as the log requires.
    pub fn set_initials(&mut self, text: &str) {
        let initials: String = text
            .chars()
            .filter(|c| c.is_alphanumeric())
            .take(8)
            .collect::<String>()
            .to_uppercase();
        if initials != self.settings.initials {
            self.settings.initials = initials;
            self.save();
        }
    }

    pub fn set_lang(&mut self, lang: Lang) {
        self.settings.lang = lang.tag().into();
        self.save();
    }

    pub fn set_units(&mut self, system: UnitSystem) {
        self.settings.us_units = system == UnitSystem::Us;
        self.save();
    }

    pub fn set_high_contrast(&mut self, on: bool) {
        self.settings.high_contrast = on;
        self.save();
    }

    pub fn pick_site(&mut self, index: usize) {
        if index < self.settings.sites.len() {
            self.settings.site_index = index;
            self.settings.point_index = 0;
            self.save();
        }
    }

    pub fn pick_point(&mut self, index: usize) {
        if index < self.site().sampling_taps.len() {
            self.settings.point_index = index;
            self.save();
        }
    }

    /// Preferences only (never a dose record); a failed write just loses the preference. The
    /// profiles go first, so an interrupted save never leaves settings without sites.
    pub fn save(&self) {
        if let Some(dir) = &self.data_dir
            && sites::save(dir, &self.settings.sites).is_ok()
            && let Ok(text) = serde_json::to_string_pretty(&self.settings)
        {
            let _ = super::files::write_whole(&dir.join(SETTINGS_FILE), text.as_bytes());
        }
    }

    /// The text of the app's own file `name` in the data directory, if there is one.
    pub fn read_file(&self, name: &str) -> Option<String> {
        std::fs::read_to_string(self.data_dir.as_ref()?.join(name)).ok()
    }

    /// Replaces the app's own file `name` in the data directory whole (creating the
    /// directory); without a data directory nothing is written. A preference-like file only.
    pub fn write_file(&self, name: &str, bytes: &[u8]) -> std::io::Result<()> {
        let Some(dir) = &self.data_dir else {
            return Ok(());
        };
        std::fs::create_dir_all(dir)?;
        super::files::write_whole(&dir.join(name), bytes)
    }

    /// The app's export folder (`<data dir>/exports`), when the platform gave a data dir.
    pub fn export_folder(&self) -> Option<PathBuf> {
        self.data_dir.as_ref().map(|d| d.join("exports"))
    }
}
