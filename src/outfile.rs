//! Output files written beside a path the user gave (an export, a report, a backup, the
//! rejects of an import): made whole under a name nobody can foresee and then put in place in
//! one step. Pure filesystem: knows nothing of SQL, CSV, PDF or the shop's rules.
//!
//! Why: a side file with a fixed name (`OUT.partial`) can be planted beforehand as a link, and
//! writing to it then writes through the link to whatever it points at. Here every side file
//! is created new and exclusive (`O_CREAT | O_EXCL`, which never follows a link) in the
//! target's own folder, under a random name, and is renamed over the target only when it is
//! complete; a failure or a cancel removes it (the file is deleted when dropped). A target that
//! exists is replaced only when the caller says so, and then the rename replaces the name
//! itself: a link at the target is replaced, never written through. Without leave to replace,
//! the rename refuses to overwrite a name that appeared in the meantime.
//!
//! A device or pipe given as the target (`/dev/null`, `/dev/stdout`) is written in place when
//! the caller allows it: renaming over it would replace the device with a regular file.
//!
//! A process killed while writing cannot remove its side file; the next write into the same
//! folder removes side files whose process is gone (their name carries the process id).

use std::ffi::OsString;
use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

use tempfile::NamedTempFile;

/// Why an output file could not be made.
#[derive(Debug, thiserror::Error)]
pub enum OutFileError {
    #[error("{}: the file already exists; choose a new name{}", path.display(), if *.can_force { " or give --force to replace it" } else { "" })]
    Exists { path: PathBuf, can_force: bool },
    #[error("{} is a folder; give a file name", path.display())]
    IsFolder { path: PathBuf },
    #[error("the folder {} does not exist", path.display())]
    NoFolder { path: PathBuf },
    #[error("{} is not a regular file (a device or pipe); give a file name", path.display())]
    NotAFile { path: PathBuf },
    #[error("cannot write {}: {source}", path.display())]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
}

impl OutFileError {
    /// The user can fix it by naming another file (as opposed to a failing disk).
    pub fn is_input(&self) -> bool {
        !matches!(self, OutFileError::Io { .. })
    }
}

/// What to do with what is already at the target.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Options {
    /// Replace an existing file (or link) at the target; otherwise an existing name is refused.
    pub replace: bool,
    /// Write a device or pipe at the target in place; otherwise it is refused.
    pub devices_in_place: bool,
    /// Whether the caller offers a `--force` (only changes the refusal's wording).
    pub can_force: bool,
}

/// An output file being written: a new side file beside the target, or a device in place.
pub struct OutFile {
    target: PathBuf,
    replace: bool,
    can_force: bool,
    kind: Kind,
}

enum Kind {
    Side(NamedTempFile),
    Device(File),
}

/// End of side-file names: `.NAME.PID-RANDOM.partial`.
const SUFFIX: &str = ".partial";

impl OutFile {
    /// Starts writing `target`: checks the target and its folder, then creates the side file.
    pub fn create(target: &Path, opts: Options) -> Result<OutFile, OutFileError> {
        let io = |source| OutFileError::Io {
            path: target.to_path_buf(),
            source,
        };
        let Some(name) = target.file_name() else {
            return Err(OutFileError::IsFolder {
                path: target.to_path_buf(),
            });
        };
        let folder = folder_of(target);
        if !folder.is_dir() {
            return Err(OutFileError::NoFolder { path: folder });
        }
        // What is at the target itself (a link is not followed here) ...
        if let Ok(own) = std::fs::symlink_metadata(target) {
            // ... and what it leads to: a device reached through /dev/stdout is still a device.
            let led = std::fs::metadata(target).ok();
            if led.as_ref().is_some_and(|m| m.is_dir()) {
                return Err(OutFileError::IsFolder {
                    path: target.to_path_buf(),
                });
            }
            let device = led.as_ref().is_some_and(|m| !m.is_file() && !m.is_dir());
            if device || (!own.is_file() && !own.file_type().is_symlink()) {
                if !opts.devices_in_place {
                    return Err(OutFileError::NotAFile {
                        path: target.to_path_buf(),
                    });
                }
                let file = std::fs::OpenOptions::new()
                    .write(true)
                    .open(target)
                    .map_err(io)?;
                return Ok(OutFile {
                    target: target.to_path_buf(),
                    replace: false,
                    can_force: opts.can_force,
                    kind: Kind::Device(file),
                });
            }
            if !opts.replace {
                return Err(OutFileError::Exists {
                    path: target.to_path_buf(),
                    can_force: opts.can_force,
                });
            }
        }
        remove_leftovers(&folder);
        let mut prefix = OsString::from(".");
        prefix.push(name);
        prefix.push(format!(".{}-", std::process::id()));
        let mut builder = tempfile::Builder::new();
        builder.prefix(&prefix).suffix(SUFFIX).rand_bytes(8);
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            // As `File::create` would: the user's umask decides (tempfile's default is 0600).
            builder.permissions(std::fs::Permissions::from_mode(0o666));
        }
        let side = builder.tempfile_in(&folder).map_err(io)?;
        Ok(OutFile {
            target: target.to_path_buf(),
            replace: opts.replace,
            can_force: opts.can_force,
            kind: Kind::Side(side),
        })
    }

    /// The file to write to.
    pub fn file(&mut self) -> &mut File {
        match &mut self.kind {
            Kind::Side(t) => t.as_file_mut(),
            Kind::Device(f) => f,
        }
    }

    /// The side file's path, for writers that open it by name (SQLite); `None` for a device.
    pub fn side_path(&self) -> Option<&Path> {
        match &self.kind {
            Kind::Side(t) => Some(t.path()),
            Kind::Device(_) => None,
        }
    }

    /// The target.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Puts the complete file in place: flushed to disk, then renamed over the target in one
    /// step (refusing to overwrite unless replacing was allowed). On failure the side file is
    /// removed.
    pub fn commit(self) -> Result<PathBuf, OutFileError> {
        let target = self.target;
        let io = |source| OutFileError::Io {
            path: target.clone(),
            source,
        };
        match self.kind {
            Kind::Device(mut f) => {
                f.flush().map_err(io)?;
            }
            Kind::Side(t) => {
                t.as_file().sync_all().map_err(io)?;
                let kept = if self.replace {
                    t.persist(&target)
                } else {
                    t.persist_noclobber(&target)
                };
                if let Err(e) = kept {
                    // Dropping the handle back removes the side file.
                    let exists = e.error.kind() == std::io::ErrorKind::AlreadyExists;
                    drop(e.file);
                    return Err(if exists {
                        OutFileError::Exists {
                            path: target,
                            can_force: self.can_force,
                        }
                    } else {
                        io(e.error)
                    });
                }
            }
        }
        Ok(target)
    }
}

impl Write for OutFile {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.file().write(buf)
    }
    fn flush(&mut self) -> std::io::Result<()> {
        self.file().flush()
    }
}

/// Writes `bytes` to `target` whole or not at all.
pub fn write_whole(target: &Path, bytes: &[u8], opts: Options) -> Result<PathBuf, OutFileError> {
    let mut out = OutFile::create(target, opts)?;
    out.write_all(bytes).map_err(|source| OutFileError::Io {
        path: target.to_path_buf(),
        source,
    })?;
    out.commit()
}

/// Whether writing `target` would replace something (a file or link there; a device or pipe
/// is written in place and does not count).
pub fn is_taken(target: &Path) -> bool {
    std::fs::symlink_metadata(target).is_ok()
        && std::fs::metadata(target).map_or(true, |m| m.is_file() || m.is_dir())
}

/// `folder/STEM.EXT`, or `folder/STEM-2.EXT`, `-3` … : the first name nothing is at yet.
pub fn free_name(folder: &Path, stem: &str, ext: &str) -> PathBuf {
    let mut candidate = folder.join(format!("{stem}.{ext}"));
    let mut n = 2u32;
    while std::fs::symlink_metadata(&candidate).is_ok() && n < u32::MAX {
        candidate = folder.join(format!("{stem}-{n}.{ext}"));
        n += 1;
    }
    candidate
}

/// The folder a target is in (`.` for a bare file name).
pub fn folder_of(target: &Path) -> PathBuf {
    match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Removes side files in `folder` (and the files a writer such as SQLite kept beside them) left
/// by processes that no longer run. Best effort: a folder that cannot be listed is left alone.
fn remove_leftovers(folder: &Path) {
    let Ok(entries) = std::fs::read_dir(folder) else {
        return;
    };
    for entry in entries.flatten() {
        let file_name = entry.file_name();
        let Some(pid) = file_name.to_str().and_then(leftover_pid) else {
            continue;
        };
        if pid == std::process::id() || process_runs(pid) {
            continue;
        }
        // Only plain files (a link here is removed as a link, never followed).
        if entry
            .file_type()
            .is_ok_and(|t| t.is_file() || t.is_symlink())
        {
            let _ = std::fs::remove_file(entry.path());
        }
    }
}

/// `.NAME.PID-RANDOM.partial` (with `-journal`, `-wal` or `-shm` after it for SQLite's files
/// beside it) → PID; anything else → `None`.
fn leftover_pid(file_name: &str) -> Option<u32> {
    let rest = file_name.strip_prefix('.')?;
    let rest = ["-journal", "-wal", "-shm"]
        .iter()
        .find_map(|t| rest.strip_suffix(t))
        .unwrap_or(rest)
        .strip_suffix(SUFFIX)?;
    let (head, random) = rest.rsplit_once('-')?;
    let (name, pid) = head.rsplit_once('.')?;
    if name.is_empty() || random.len() != 8 || !random.chars().all(|c| c.is_ascii_alphanumeric()) {
        return None;
    }
    pid.parse().ok()
}

#[cfg(unix)]
fn process_runs(pid: u32) -> bool {
    let Ok(pid) = libc::pid_t::try_from(pid) else {
        return true;
    };
    // SAFETY: signal 0 only asks whether the process exists; nothing is sent.
    let r = unsafe { libc::kill(pid, 0) };
    r == 0 || std::io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
}

#[cfg(not(unix))]
fn process_runs(_pid: u32) -> bool {
    // Unknown: never remove another process's file.
    true
}

#[cfg(test)]
mod tests {
    use super::*;

    const NEW: Options = Options {
        replace: false,
        devices_in_place: true,
        can_force: true,
    };
    const FORCE: Options = Options {
        replace: true,
        devices_in_place: true,
        can_force: true,
    };

    fn names(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn a_side_file_is_new_random_and_gone_when_dropped() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.csv");
        let a = OutFile::create(&target, NEW).unwrap();
        let b = OutFile::create(&target, NEW).unwrap();
        let (pa, pb) = (a.side_path().unwrap(), b.side_path().unwrap());
        assert_ne!(pa, pb, "two writers get two side files");
        assert_eq!(pa.parent(), Some(dir.path()), "in the target's own folder");
        drop(a);
        drop(b);
        assert!(names(dir.path()).is_empty(), "{:?}", names(dir.path()));
    }

    #[test]
    fn an_existing_target_is_kept_unless_replacing_and_a_link_is_replaced_not_followed() {
        let dir = tempfile::tempdir().unwrap();
        let victim = dir.path().join("victim.txt");
        std::fs::write(&victim, "keep me").unwrap();
        let target = dir.path().join("out.csv");
        std::os::unix::fs::symlink(&victim, &target).unwrap();
        assert!(matches!(
            OutFile::create(&target, NEW),
            Err(OutFileError::Exists { .. })
        ));
        write_whole(&target, b"new", FORCE).unwrap();
        assert_eq!(std::fs::read_to_string(&victim).unwrap(), "keep me");
        assert!(!std::fs::symlink_metadata(&target)
            .unwrap()
            .file_type()
            .is_symlink());
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new");
    }

    #[test]
    fn a_name_that_appears_while_writing_is_not_overwritten() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.csv");
        let mut out = OutFile::create(&target, NEW).unwrap();
        out.write_all(b"mine").unwrap();
        std::fs::write(&target, "theirs").unwrap();
        assert!(matches!(out.commit(), Err(OutFileError::Exists { .. })));
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "theirs");
        assert_eq!(names(dir.path()), ["out.csv"]);
    }

    #[test]
    fn a_device_is_written_in_place_only_when_allowed() {
        let null = Path::new("/dev/null");
        write_whole(null, b"x", NEW).unwrap();
        use std::os::unix::fs::FileTypeExt;
        assert!(std::fs::metadata(null)
            .unwrap()
            .file_type()
            .is_char_device());
        let no = Options {
            devices_in_place: false,
            ..NEW
        };
        assert!(matches!(
            OutFile::create(null, no),
            Err(OutFileError::NotAFile { .. })
        ));
    }

    #[test]
    fn side_files_of_a_gone_process_are_removed_and_others_kept() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("copy.sqlite");
        // A process id that cannot run: above the kernel's pid_max limit (2^22).
        let gone = ".copy.sqlite.4999999-Ab3dE6gH.partial";
        let gone_journal = ".copy.sqlite.4999999-Ab3dE6gH.partial-journal";
        let mine = format!(".copy.sqlite.{}-Zz9yY8xX.partial", std::process::id());
        let other = "copy.sqlite.4999999-Ab3dE6gH.partial"; // not ours: no leading dot
        let elsewhere = ".notes.csv.4999999-Qq1wW2eE.partial"; // another target's
        for n in [gone, gone_journal, mine.as_str(), other, elsewhere] {
            std::fs::write(dir.path().join(n), "x").unwrap();
        }
        write_whole(&target, b"db", NEW).unwrap();
        let left = names(dir.path());
        assert!(!left.contains(&gone.to_string()), "{left:?}");
        assert!(!left.contains(&gone_journal.to_string()), "{left:?}");
        assert!(!left.contains(&elsewhere.to_string()), "{left:?}");
        assert!(left.contains(&mine), "{left:?}");
        assert!(left.contains(&other.to_string()), "{left:?}");
    }

    #[test]
    fn a_free_name_skips_files_and_links() {
        let dir = tempfile::tempdir().unwrap();
        assert_eq!(free_name(dir.path(), "r", "pdf"), dir.path().join("r.pdf"));
        std::fs::write(dir.path().join("r.pdf"), "").unwrap();
        std::os::unix::fs::symlink("/nowhere", dir.path().join("r-2.pdf")).unwrap();
        assert_eq!(
            free_name(dir.path(), "r", "pdf"),
            dir.path().join("r-3.pdf")
        );
        assert!(
            is_taken(&dir.path().join("r-2.pdf")),
            "a dangling link is taken"
        );
        assert!(!is_taken(Path::new("/dev/null")));
    }

    #[test]
    fn a_missing_folder_and_a_folder_target_are_named() {
        let dir = tempfile::tempdir().unwrap();
        assert!(matches!(
            OutFile::create(&dir.path().join("no/out.csv"), NEW),
            Err(OutFileError::NoFolder { .. })
        ));
        assert!(matches!(
            OutFile::create(dir.path(), FORCE),
            Err(OutFileError::IsFolder { .. })
        ));
    }
}
