//! File choosers: the desktop's own open and save dialogs (rfd, through the desktop portal) for
//! the app's file fields. A chooser only fills a path field: the typed path beside it stays the
//! way in, and what is done with the path is the screen's business. Tests put their own chooser
//! in place (`App::set_file_chooser`), as slint's testing backend has no desktop to ask.

use std::path::{Path, PathBuf};
use std::rc::Rc;

/// What a chooser is asked for.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FileQuestion {
    /// The dialog's title.
    pub title: String,
    /// A file to write (a save dialog) rather than one to read.
    pub save: bool,
    /// The kind of file shown, e.g. `CSV file`.
    pub kind: String,
    /// Its name endings without the dot, e.g. `csv`.
    pub extensions: Vec<String>,
    /// The folder the dialog opens in.
    pub folder: PathBuf,
    /// For a save dialog, the name offered.
    pub name: Option<String>,
}

impl FileQuestion {
    /// A CSV file to read, starting in `folder`.
    pub fn open_csv(title: &str, folder: PathBuf) -> Self {
        FileQuestion {
            title: title.to_string(),
            save: false,
            kind: "CSV file".into(),
            extensions: vec!["csv".into(), "txt".into()],
            folder,
            name: None,
        }
    }

    /// A PDF to write at `current` (its folder and name offered).
    pub fn save_pdf(title: &str, current: &Path, fallback_folder: PathBuf) -> Self {
        let folder = current
            .parent()
            .filter(|p| p.is_dir())
            .map(Path::to_path_buf)
            .unwrap_or(fallback_folder);
        FileQuestion {
            title: title.to_string(),
            save: true,
            kind: "PDF".into(),
            extensions: vec!["pdf".into()],
            folder,
            name: current
                .file_name()
                .map(|n| n.to_string_lossy().into_owned()),
        }
    }
}

/// Asks for a file; `None` when the person cancelled (or no dialog could be shown).
pub type Chooser = Rc<dyn Fn(&FileQuestion) -> Option<PathBuf>>;

/// The desktop's own dialog. Blocks until it is closed, as a modal dialog does.
pub fn native(q: &FileQuestion) -> Option<PathBuf> {
    let exts: Vec<&str> = q.extensions.iter().map(String::as_str).collect();
    let mut d = rfd::FileDialog::new()
        .set_title(&q.title)
        .add_filter(&q.kind, &exts)
        .set_directory(&q.folder);
    if q.save {
        if let Some(name) = &q.name {
            d = d.set_file_name(name);
        }
        d.save_file()
    } else {
        d.pick_file()
    }
}

/// The folder a file dialog for a file at `typed` opens in: the typed path's folder when it is
/// one, else `fallback`.
pub fn folder_of(typed: &str, fallback: PathBuf) -> PathBuf {
    let p = Path::new(typed.trim());
    if p.is_dir() {
        return p.to_path_buf();
    }
    p.parent()
        .filter(|d| !d.as_os_str().is_empty() && d.is_dir())
        .map(Path::to_path_buf)
        .unwrap_or(fallback)
}
