//! Where the window keeps things between sessions: recent files, the theme, the autosave of unsaved work and
//! each board file's pinned curves.
//!
//! Board files themselves are read and written by `io` (atomically). This module only decides where the
//! window's own small files live and what is in them. A [`Store`] with no directory keeps nothing, which is what
//! the tests use.

use super::pins::Pin;
use crate::io::{board_to_string, read_limited, write_atomically};
use crate::model::Board;
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::time::SystemTime;

/// How many recent files the File menu lists.
pub const MAX_RECENT: usize = 8;

/// How many board files keep their pins; the least recently pinned one is forgotten first.
pub const MAX_PINNED_BOARDS: usize = 32;

/// How many pins one board file keeps (the newest).
pub const MAX_PINS_PER_BOARD: usize = 64;

/// The largest pins file read back (bytes): a pin of a 2 000-point curve is about 80 kB, so this holds every
/// board's pins with room to spare, and a damaged or foreign file cannot make the window allocate without bound.
const MAX_PINS_FILE: u64 = 64 << 20;

/// One board file's pins, as the store keeps them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
struct PinnedBoard {
    /// The board file (canonical path), the key.
    board: PathBuf,
    pins: Vec<Pin>,
}

/// The whole pins file: boards, most recently pinned first.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
struct PinsFile {
    #[serde(default)]
    boards: Vec<PinnedBoard>,
}

/// The window's preferences.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Prefs {
    /// Recently opened or saved board files, newest first.
    #[serde(default)]
    pub recent: Vec<PathBuf>,
    /// Dark theme (else light).
    #[serde(default = "yes")]
    pub dark: bool,
}

fn yes() -> bool {
    true
}

impl Default for Prefs {
    fn default() -> Self {
        Prefs { recent: Vec::new(), dark: true }
    }
}

impl Prefs {
    /// Put `path` at the top of the recent files.
    pub fn add_recent(&mut self, path: &Path) {
        let path = canonical(path);
        self.recent.retain(|p| *p != path);
        self.recent.insert(0, path);
        self.recent.truncate(MAX_RECENT);
    }
}

/// Unsaved work left behind by a session that ended without saving or discarding it (a crash, a killed process).
#[derive(Debug, Clone, PartialEq)]
pub struct LeftOver {
    /// The autosaved board file.
    pub board_file: PathBuf,
    /// The file the work was opened from, if any.
    pub origin: Option<PathBuf>,
    /// When it was last autosaved.
    pub modified: Option<SystemTime>,
}

/// The directory of the window's own files.
#[derive(Debug, Clone, Default)]
pub struct Store {
    dir: Option<PathBuf>,
}

impl Store {
    /// A store in `dir`; `None` keeps nothing.
    pub fn new(dir: Option<PathBuf>) -> Store {
        Store { dir }
    }

    /// The usual place: `$HUSHRAIL_DATA_DIR` when set, else the platform's data directory for the app.
    pub fn default_dir() -> Option<PathBuf> {
        std::env::var_os("HUSHRAIL_DATA_DIR").map(PathBuf::from).or_else(|| eframe::storage_dir("hushrail"))
    }

    /// True when this store keeps files (false for tests and benchmarks).
    pub fn keeps_files(&self) -> bool {
        self.dir.is_some()
    }

    fn file(&self, name: &str) -> Option<PathBuf> {
        self.dir.as_ref().map(|d| d.join(name))
    }

    /// The saved preferences, or the defaults when there are none or they cannot be read.
    pub fn load_prefs(&self) -> Prefs {
        self.file("prefs.json")
            .and_then(|p| std::fs::read_to_string(p).ok())
            .and_then(|t| serde_json::from_str(&t).ok())
            .unwrap_or_default()
    }

    /// Keep the preferences. Failing to is not worth interrupting the user for; the message says why.
    pub fn save_prefs(&self, prefs: &Prefs) -> Result<(), String> {
        let Some(path) = self.file("prefs.json") else { return Ok(()) };
        let text = serde_json::to_string_pretty(prefs).map_err(|e| e.to_string())?;
        self.ensure_dir()?;
        write_atomically(&path, text.as_bytes()).map_err(|e| format!("{}: {e}", path.display()))
    }

    fn ensure_dir(&self) -> Result<(), String> {
        match &self.dir {
            Some(d) => std::fs::create_dir_all(d).map_err(|e| format!("{}: {e}", d.display())),
            None => Ok(()),
        }
    }

    fn autosave_names(pid: u32) -> (String, String) {
        (format!("autosave-{pid}.json"), format!("autosave-{pid}.origin"))
    }

    /// Keep a copy of unsaved work (this process's slot), with the file it came from.
    pub fn write_autosave(&self, board: &Board, origin: Option<&Path>) -> Result<(), String> {
        let (b, o) = Self::autosave_names(std::process::id());
        let (Some(board_path), Some(origin_path)) = (self.file(&b), self.file(&o)) else { return Ok(()) };
        self.ensure_dir()?;
        let origin_text = origin.map(|p| p.display().to_string()).unwrap_or_default();
        write_atomically(&origin_path, origin_text.as_bytes())
            .and_then(|_| write_atomically(&board_path, board_to_string(board).as_bytes()))
            .map_err(|e| format!("{}: {e}", board_path.display()))
    }

    /// Drop this process's autosave (the work was saved or discarded).
    pub fn remove_autosave(&self) {
        let (b, o) = Self::autosave_names(std::process::id());
        for name in [b, o] {
            if let Some(p) = self.file(&name) {
                let _ = std::fs::remove_file(p);
            }
        }
    }

    /// The newest autosave left by a process that is no longer running.
    pub fn find_left_over(&self) -> Option<LeftOver> {
        let dir = self.dir.as_ref()?;
        let me = std::process::id();
        let mut found: Vec<LeftOver> = std::fs::read_dir(dir)
            .ok()?
            .filter_map(|e| e.ok())
            .filter_map(|e| {
                let name = e.file_name().to_string_lossy().into_owned();
                let pid: u32 = name.strip_prefix("autosave-")?.strip_suffix(".json")?.parse().ok()?;
                if pid == me || process_alive(pid) {
                    return None;
                }
                let origin = std::fs::read_to_string(dir.join(format!("autosave-{pid}.origin")))
                    .ok()
                    .map(|t| t.trim().to_string())
                    .filter(|t| !t.is_empty())
                    .map(PathBuf::from);
                Some(LeftOver { board_file: e.path(), origin, modified: e.metadata().ok()?.modified().ok() })
            })
            .collect();
        found.sort_by_key(|l| std::cmp::Reverse(l.modified));
        found.into_iter().next()
    }

    fn load_pins_file(&self) -> PinsFile {
        self.file("pins.json")
            .and_then(|p| read_limited(&p, MAX_PINS_FILE).ok())
            .and_then(|bytes| serde_json::from_slice(&bytes).ok())
            .unwrap_or_default()
    }

    /// The pins kept for the board file at `board` (none when there are none or the pins file cannot be read:
    /// a lost pin is a curve to take again, not worth refusing to open a board over).
    pub fn load_pins(&self, board: &Path) -> Vec<Pin> {
        let key = canonical(board);
        let mut pins =
            self.load_pins_file().boards.into_iter().find(|b| b.board == key).map(|b| b.pins).unwrap_or_default();
        // Numbers read back are finite (JSON has no others), but a hand-edited file may still hold an empty or
        // oversized list: keep only pins that can be drawn, at most the usual number.
        pins.retain(|p| !p.points.is_empty() && p.points.iter().all(|q| q[0].is_finite() && q[1].is_finite()));
        pins.truncate(MAX_PINS_PER_BOARD);
        pins
    }

    /// Keep `pins` for the board file at `board` (an empty list forgets the board's pins).
    pub fn save_pins(&self, board: &Path, pins: &[Pin]) -> Result<(), String> {
        let Some(path) = self.file("pins.json") else { return Ok(()) };
        let key = canonical(board);
        let mut all = self.load_pins_file();
        all.boards.retain(|b| b.board != key);
        if !pins.is_empty() {
            let newest = pins[pins.len().saturating_sub(MAX_PINS_PER_BOARD)..].to_vec();
            all.boards.insert(0, PinnedBoard { board: key, pins: newest });
        }
        all.boards.truncate(MAX_PINNED_BOARDS);
        let text = serde_json::to_string(&all).map_err(|e| e.to_string())?;
        self.ensure_dir()?;
        write_atomically(&path, text.as_bytes()).map_err(|e| format!("{}: {e}", path.display()))
    }

    /// Drop a left-over autosave once the user restored or discarded it.
    pub fn forget_left_over(&self, left: &LeftOver) {
        let _ = std::fs::remove_file(&left.board_file);
        let _ = std::fs::remove_file(left.board_file.with_extension("origin"));
    }
}

/// The key a board file's pins are kept under: its canonical path when it exists, so the same file reached by
/// another path finds its pins.
fn canonical(path: &Path) -> PathBuf {
    std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf())
}

/// Whether a process still runs. On Linux /proc says; elsewhere we cannot tell cheaply and treat another
/// process's autosave as left over (offering it back is harmless: the user can decline).
fn process_alive(pid: u32) -> bool {
    if cfg!(target_os = "linux") { Path::new(&format!("/proc/{pid}")).exists() } else { false }
}

/// Ask for a board file to open (native dialog). `None` when the user cancels or no dialog is available.
pub fn pick_open(start: Option<&Path>) -> Option<PathBuf> {
    let mut dialog = rfd::FileDialog::new().add_filter("Board file", &["json"]).set_title("Open a board");
    if let Some(dir) = start.and_then(|p| p.parent()) {
        dialog = dialog.set_directory(dir);
    }
    dialog.pick_file()
}

/// Ask where to save a board file (native dialog).
pub fn pick_save(current: Option<&Path>, board_name: &str) -> Option<PathBuf> {
    let mut dialog = rfd::FileDialog::new().add_filter("Board file", &["json"]).set_title("Save the board as");
    let file_name = current
        .and_then(|p| p.file_name())
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| format!("{}.json", slug(board_name)));
    dialog = dialog.set_file_name(file_name);
    if let Some(dir) = current.and_then(|p| p.parent()) {
        dialog = dialog.set_directory(dir);
    }
    dialog.save_file()
}

/// A file-name-friendly form of a board's name.
/// Ask where to save an export (native dialog): a file of type `what` ending in `.ext`, named after the board
/// and `suffix`, beside the board file when it has one.
pub fn pick_export(
    what: &str,
    ext: &str,
    board_path: Option<&Path>,
    board_name: &str,
    suffix: &str,
) -> Option<PathBuf> {
    let mut dialog = rfd::FileDialog::new()
        .add_filter(what, &[ext])
        .set_title(format!("Save the {what} as"))
        .set_file_name(format!("{}{suffix}.{ext}", slug(board_name)));
    if let Some(dir) = board_path.and_then(|p| p.parent()) {
        dialog = dialog.set_directory(dir);
    }
    dialog.save_file()
}

pub(super) fn slug(name: &str) -> String {
    let s: String =
        name.chars().map(|c| if c.is_ascii_alphanumeric() { c.to_ascii_lowercase() } else { '_' }).collect();
    let s = s.trim_matches('_').to_string();
    if s.is_empty() { "board".into() } else { s }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prefs_and_autosave_round_trip() {
        let dir = tempfile::tempdir().unwrap();
        let store = Store::new(Some(dir.path().to_path_buf()));
        let mut prefs = store.load_prefs();
        assert_eq!(prefs, Prefs::default());
        prefs.dark = false;
        prefs.add_recent(Path::new("/nowhere/a.json"));
        prefs.add_recent(Path::new("/nowhere/b.json"));
        prefs.add_recent(Path::new("/nowhere/a.json"));
        store.save_prefs(&prefs).unwrap();
        let back = store.load_prefs();
        assert_eq!(back.recent, vec![PathBuf::from("/nowhere/a.json"), PathBuf::from("/nowhere/b.json")]);
        assert!(!back.dark);

        let board = crate::samples::default_board().unwrap();
        store.write_autosave(&board, Some(Path::new("/nowhere/a.json"))).unwrap();
        // Our own autosave is not left over while we run.
        assert_eq!(store.find_left_over(), None);
        // One from a process that no longer exists is (pid 4294967 is above Linux's pid limit).
        let mine = dir.path().join(format!("autosave-{}.json", std::process::id()));
        std::fs::rename(&mine, dir.path().join("autosave-4294967.json")).unwrap();
        std::fs::rename(mine.with_extension("origin"), dir.path().join("autosave-4294967.origin")).unwrap();
        let left = store.find_left_over().expect("left over");
        assert_eq!(left.origin, Some(PathBuf::from("/nowhere/a.json")));
        assert_eq!(crate::io::read_board(&left.board_file).unwrap(), board);
        store.forget_left_over(&left);
        assert_eq!(store.find_left_over(), None);
    }

    #[test]
    fn pins_are_kept_per_board_file() {
        let dir = tempfile::tempdir().unwrap();
        let store = Store::new(Some(dir.path().join("store")));
        let a = dir.path().join("a.json");
        let b = dir.path().join("b.json");
        std::fs::write(&a, "{}").unwrap();
        let pin = |name: &str| Pin {
            name: name.into(),
            rail: "VCORE".into(),
            slot: 0,
            visible: true,
            points: vec![[3.0, -1.0], [9.0, 0.5]],
            worst_ohm: 0.1,
            worst_hz: 1e6,
            margin_db: -2.0,
            meets: false,
        };
        assert!(store.load_pins(&a).is_empty());
        store.save_pins(&a, &[pin("before")]).unwrap();
        store.save_pins(&b, &[pin("other")]).unwrap();
        // The same file by another path finds its pins.
        let a_again = dir.path().join(".").join("a.json");
        assert_eq!(store.load_pins(&a_again), vec![pin("before")]);
        assert_eq!(store.load_pins(&b), vec![pin("other")]);
        store.save_pins(&a, &[]).unwrap();
        assert!(store.load_pins(&a).is_empty());
        assert_eq!(store.load_pins(&b), vec![pin("other")]);
        // A damaged pins file gives no pins, not an error.
        std::fs::write(dir.path().join("store/pins.json"), "{ not json").unwrap();
        assert!(store.load_pins(&b).is_empty());
    }

    #[test]
    fn no_directory_keeps_nothing() {
        let store = Store::new(None);
        assert!(store.save_prefs(&Prefs::default()).is_ok());
        assert!(store.write_autosave(&crate::samples::default_board().unwrap(), None).is_ok());
        assert_eq!(store.find_left_over(), None);
        assert_eq!(slug("Edge camera main board"), "edge_camera_main_board");
    }
}
