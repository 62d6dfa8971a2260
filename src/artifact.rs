//! Artifacts: the files orbitcnf writes so that an answer can be checked
//! later — CNFs, proofs, orbits, manifests — and how they are written.
//!
//! Three rules hold for every such file:
//!
//! * **Atomic.** Bytes go to a temporary file in the target's folder, are
//!   flushed with `fsync`, and the temporary file is renamed over the target
//!   ([`write_atomically`], [`temp_beside`] + [`persist`]). A rename within one
//!   file system is atomic, so a reader sees the old file or the whole new
//!   one, never a torn one. Whole folders (certificate bundles) are built
//!   beside their target and swapped in the same way ([`replace_dir`]).
//! * **Digested.** Manifests list every file with its SHA-256 and size
//!   ([`FileEntry`]); a file that was edited afterwards is refused, never
//!   misread.
//! * **No litter.** Temporary files are named `.orbitcnf-tmp-…` and hold an
//!   exclusive advisory lock for as long as their writer lives. A process
//!   that is killed loses the lock with its life, so [`sweep_stale`] can tell
//!   an abandoned temporary file (lock free) from one that a live run is
//!   still writing (locked), and removes only the former. A process sweeps
//!   a folder before its first write there, and again at most every ten
//!   minutes (a campaign's folder of results is large to list).

use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use crate::error::{Error, Result};

/// The name prefix of every temporary file and folder orbitcnf creates.
pub const TEMP_PREFIX: &str = ".orbitcnf-tmp-";

/// The prefix of the temporary files of orbitcnf 0.1 before [`TEMP_PREFIX`]
/// (the `tempfile` crate's default); swept only in folders orbitcnf owns.
const LEGACY_TEMP_PREFIX: &str = ".tmp";

/// A temporary file younger than this is never swept: its writer may have
/// created it and not yet taken its lock.
const SWEEP_MIN_AGE: Duration = Duration::from_secs(60);

/// A temporary folder (of [`replace_dir`]) older than this is abandoned: it
/// lives only while a finished answer's files are moved into it.
const SWEEP_DIR_AGE: Duration = Duration::from_secs(3600);

/// Lower-case hex SHA-256 of `bytes`.
pub fn sha256_hex(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Hex SHA-256 and size of a file, read in pieces (proofs can be gigabytes).
///
/// # Errors
/// [`Error::Io`] naming the file.
pub fn sha256_file(path: &Path) -> Result<(String, u64)> {
    let mut f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut h = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    let mut total = 0u64;
    loop {
        let n = f.read(&mut buf).map_err(|e| Error::io(path, e))?;
        if n == 0 {
            break;
        }
        total += n as u64;
        h.update(&buf[..n]);
    }
    Ok((hex(&h.finalize()), total))
}

/// One file of a manifest, with its digest.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct FileEntry {
    /// Path relative to the manifest's folder.
    pub name: String,
    /// Hex SHA-256 of its bytes.
    pub sha256: String,
    /// Its size in bytes.
    pub bytes: u64,
}

impl FileEntry {
    /// The entry for `bytes` stored as `name`.
    pub fn of(name: &str, bytes: &[u8]) -> FileEntry {
        FileEntry {
            name: name.into(),
            sha256: sha256_hex(bytes),
            bytes: bytes.len() as u64,
        }
    }

    /// The entry for the file `dir/name`, read in pieces.
    ///
    /// # Errors
    /// [`Error::Io`] naming the file.
    pub fn of_file(dir: &Path, name: &str) -> Result<FileEntry> {
        let (sha256, bytes) = sha256_file(&dir.join(name))?;
        Ok(FileEntry {
            name: name.into(),
            sha256,
            bytes,
        })
    }

    /// Reads `dir/name` and checks it against the entry; `manifest` names
    /// the manifest in the error.
    ///
    /// # Errors
    /// [`Error::Io`], or [`Error::Parse`] when size or digest differ.
    pub fn read_checked(&self, dir: &Path, manifest: &str) -> Result<Vec<u8>> {
        let path = dir.join(&self.name);
        let bytes = std::fs::read(&path).map_err(|e| Error::io(&path, e))?;
        if bytes.len() as u64 != self.bytes || sha256_hex(&bytes) != self.sha256 {
            return Err(Error::file(
                path.display().to_string(),
                format!(
                    "does not match its size and SHA-256 in {manifest}; it was changed after it was written"
                ),
            ));
        }
        Ok(bytes)
    }

    /// As [`FileEntry::read_checked`] without keeping the bytes (for large
    /// files such as proofs, which are then read in pieces by their checker).
    ///
    /// # Errors
    /// As [`FileEntry::read_checked`].
    pub fn verify(&self, dir: &Path, manifest: &str) -> Result<()> {
        let path = dir.join(&self.name);
        let (sha, bytes) = sha256_file(&path)?;
        if bytes != self.bytes || sha != self.sha256 {
            return Err(Error::file(
                path.display().to_string(),
                format!(
                    "does not match its size and SHA-256 in {manifest}; it was changed after it was written"
                ),
            ));
        }
        Ok(())
    }
}

/// Writes `bytes` to `path` atomically (see the module docs).
///
/// # Errors
/// [`Error::Io`] naming the path.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<()> {
    use std::io::Write;
    let mut tmp = temp_beside(path)?;
    tmp.write_all(bytes).map_err(|e| Error::io(path, e))?;
    persist(tmp, path)?;
    Ok(())
}

fn folder_of(path: &Path) -> &Path {
    match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    }
}

/// A temporary file in the folder of `path`, locked for as long as it is
/// open, so that [`persist`] can rename it into place atomically and
/// [`sweep_stale`] leaves it alone. It is deleted if dropped unpersisted;
/// if the process dies first, the next sweep of that folder removes it —
/// and a process sweeps a folder before its first write there (then at most
/// every ten minutes).
///
/// # Errors
/// [`Error::Io`] naming the path.
pub fn temp_beside(path: &Path) -> Result<tempfile::NamedTempFile> {
    // Whoever writes into a folder clears what killed runs left there.
    sweep_now_and_then(folder_of(path));
    let tmp = tempfile::Builder::new()
        .prefix(TEMP_PREFIX)
        .tempfile_in(folder_of(path))
        .map_err(|e| Error::io(path, e))?;
    // A file system without advisory locks still gets the file; only the
    // sweep's knowledge of it is lost, and the sweep then goes by age.
    let _ = tmp.as_file().try_lock();
    Ok(tmp)
}

/// Syncs `tmp`, gives it the usual permissions and renames it to `path`;
/// returns its size in bytes. Readers of `path` see the old file or the
/// whole new one, never a part.
///
/// # Errors
/// [`Error::Io`] naming the path.
pub fn persist(tmp: tempfile::NamedTempFile, path: &Path) -> Result<u64> {
    let file = tmp.as_file();
    file.sync_all().map_err(|e| Error::io(path, e))?;
    make_readable(file).map_err(|e| Error::io(path, e))?;
    let bytes = file.metadata().map_err(|e| Error::io(path, e))?.len();
    tmp.persist(path).map_err(|e| Error::io(path, e.error))?;
    sync_dir(folder_of(path));
    Ok(bytes)
}

/// Gives a file the usual permissions of a user's output (temporary files start private).
///
/// # Errors
/// The I/O error of changing the permissions.
pub fn make_readable(file: &std::fs::File) -> std::io::Result<()> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        file.set_permissions(std::fs::Permissions::from_mode(0o644))?;
    }
    #[cfg(not(unix))]
    let _ = file;
    Ok(())
}

/// Makes a rename in `dir` durable (best effort: not every platform can
/// `fsync` a folder, and the file is already complete without it).
pub fn sync_dir(dir: &Path) {
    #[cfg(unix)]
    if let Ok(f) = std::fs::File::open(dir) {
        let _ = f.sync_all();
    }
    #[cfg(not(unix))]
    let _ = dir;
}

/// How often one process sweeps a folder it writes into. Listing a folder
/// costs time in its size, and a campaign's `results/` folder holds hundreds
/// of thousands of files, two written per cube: sweeping it before every
/// write made a range of cubes quadratic in the folder's size. Files left by
/// killed runs are found by the next process's first write, or by a
/// long-lived one within this interval.
const SWEEP_INTERVAL: Duration = Duration::from_secs(600);

/// The folders this process swept, and when.
static SWEPT: std::sync::Mutex<Vec<(PathBuf, std::time::Instant)>> =
    std::sync::Mutex::new(Vec::new());

/// [`sweep_stale`] of `dir` (not owned), unless this process swept it less
/// than [`SWEEP_INTERVAL`] ago.
fn sweep_now_and_then(dir: &Path) {
    let now = std::time::Instant::now();
    {
        // A poisoned lock only means another thread panicked mid-update;
        // the list is still a list.
        let mut swept = SWEPT
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner);
        match swept.iter_mut().find(|(d, _)| d == dir) {
            Some((_, t)) if now.duration_since(*t) < SWEEP_INTERVAL => return,
            Some((_, t)) => *t = now,
            None => swept.push((dir.to_path_buf(), now)),
        }
    }
    let _ = sweep_stale(dir, false);
}

/// Removes the temporary files and folders in `dir` that no live orbitcnf
/// process is writing (see the module docs), and returns their paths.
/// `owned` says that orbitcnf owns the folder (a store's or a split's
/// sub-folder), where the temporary files of older versions (`.tmp…`,
/// never locked) are removed too once they are an hour old. Errors are
/// ignored: a file that cannot be removed is simply left.
pub fn sweep_stale(dir: &Path, owned: bool) -> Vec<PathBuf> {
    let mut removed = Vec::new();
    let Ok(entries) = std::fs::read_dir(dir) else {
        return removed;
    };
    let now = SystemTime::now();
    for entry in entries.flatten() {
        let name = entry.file_name();
        let name = name.to_string_lossy();
        let ours = name.starts_with(TEMP_PREFIX);
        let legacy = owned && !ours && name.starts_with(LEGACY_TEMP_PREFIX) && name.len() > 4;
        if !ours && !legacy {
            continue;
        }
        let Ok(meta) = entry.metadata() else { continue };
        let age = meta
            .modified()
            .ok()
            .and_then(|m| now.duration_since(m).ok())
            .unwrap_or_default();
        let path = entry.path();
        let gone = if meta.is_dir() {
            ours && age >= SWEEP_DIR_AGE && std::fs::remove_dir_all(&path).is_ok()
        } else if legacy {
            age >= SWEEP_DIR_AGE && std::fs::remove_file(&path).is_ok()
        } else {
            age >= SWEEP_MIN_AGE && abandoned(&path) && std::fs::remove_file(&path).is_ok()
        };
        if gone {
            removed.push(path);
        }
    }
    removed
}

/// Whether nobody holds the lock of the temporary file at `path`.
fn abandoned(path: &Path) -> bool {
    match std::fs::OpenOptions::new().write(true).open(path) {
        Ok(f) => f.try_lock().is_ok(),
        Err(_) => false,
    }
}

/// Whether [`replace_dir`] may put a new folder in place of `dir`: it does
/// not exist, is empty, or `replaceable` accepts it. Callers check this
/// before long work whose result goes there.
///
/// # Errors
/// [`Error::Options`] when `dir` may not be replaced; [`Error::Io`].
pub fn may_replace(dir: &Path, replaceable: &dyn Fn(&Path) -> bool) -> Result<()> {
    if !dir.exists() {
        return Ok(());
    }
    if !dir.is_dir() {
        return Err(Error::Options(format!(
            "{} exists and is not a folder",
            dir.display()
        )));
    }
    let empty = std::fs::read_dir(dir)
        .map_err(|e| Error::io(dir, e))?
        .next()
        .is_none();
    if empty || replaceable(dir) {
        Ok(())
    } else {
        Err(Error::Options(format!(
            "{} exists and is not a folder orbitcnf wrote; refusing to replace it",
            dir.display()
        )))
    }
}

/// Builds a folder with `fill` in a temporary folder beside `dir`, then puts
/// it in place of `dir`: readers see the old folder or the whole new one,
/// and no file of an old folder survives next to new ones. An existing
/// `dir` is replaced only when `replaceable` says it may be (for example,
/// when it holds a manifest of the same kind) or when it is empty; anything
/// else is an error, so that a user's folder is never swept away.
///
/// # Errors
/// [`Error::Io`]; [`Error::Options`] when `dir` exists and may not be
/// replaced; whatever `fill` returns (the temporary folder is then removed).
pub fn replace_dir<T>(
    dir: &Path,
    replaceable: impl Fn(&Path) -> bool,
    fill: impl FnOnce(&Path) -> Result<T>,
) -> Result<T> {
    let parent = folder_of(dir);
    std::fs::create_dir_all(parent).map_err(|e| Error::io(parent, e))?;
    may_replace(dir, &replaceable)?;
    let exists = dir.exists();
    sweep_now_and_then(parent);
    let fresh = tempfile::Builder::new()
        .prefix(TEMP_PREFIX)
        .tempdir_in(parent)
        .map_err(|e| Error::io(parent, e))?;
    let value = fill(fresh.path())?;
    let fresh = fresh.keep();
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let _ = std::fs::set_permissions(&fresh, std::fs::Permissions::from_mode(0o755));
    }
    if exists {
        let old = tempfile::Builder::new()
            .prefix(TEMP_PREFIX)
            .tempdir_in(parent)
            .map_err(|e| Error::io(parent, e))?
            .keep();
        // rename(2) onto an existing folder needs it empty: move the old one aside first.
        std::fs::remove_dir(&old).map_err(|e| Error::io(&old, e))?;
        std::fs::rename(dir, &old).map_err(|e| Error::io(dir, e))?;
        if let Err(e) = std::fs::rename(&fresh, dir) {
            let _ = std::fs::rename(&old, dir);
            let _ = std::fs::remove_dir_all(&fresh);
            return Err(Error::io(dir, e));
        }
        let _ = std::fs::remove_dir_all(&old);
    } else if let Err(e) = std::fs::rename(&fresh, dir) {
        let _ = std::fs::remove_dir_all(&fresh);
        return Err(Error::io(dir, e));
    }
    sync_dir(parent);
    Ok(value)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn digests_are_the_standard_sha256() {
        // FIPS 180-2, appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        let dir = tempfile::tempdir().unwrap();
        std::fs::write(dir.path().join("f"), b"abc").unwrap();
        let e = FileEntry::of_file(dir.path(), "f").unwrap();
        assert_eq!(e, FileEntry::of("f", b"abc"));
        e.verify(dir.path(), "m.json").unwrap();
        std::fs::write(dir.path().join("f"), b"abd").unwrap();
        let err = e.read_checked(dir.path(), "m.json").unwrap_err();
        assert!(err.to_string().contains("does not match"), "{err}");
    }

    fn age(path: &Path, secs: u64) {
        let f = std::fs::File::options().write(true).open(path).unwrap();
        f.set_modified(SystemTime::now() - Duration::from_secs(secs))
            .unwrap();
    }

    #[test]
    fn the_sweep_removes_only_abandoned_temporary_files() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("proof.lrat");
        // A live writer's file: locked, old.
        let live = temp_beside(&target).unwrap();
        age(live.path(), 7200);
        // An abandoned one: a killed writer left it, unlocked and old.
        let dead = dir.path().join(format!("{TEMP_PREFIX}dead"));
        std::fs::write(&dead, b"half a proof").unwrap();
        age(&dead, 7200);
        // A fresh one: its writer may not have locked it yet.
        let young = dir.path().join(format!("{TEMP_PREFIX}young"));
        std::fs::write(&young, b"x").unwrap();
        // A user's file and an old-style temporary file.
        let user = dir.path().join("notes.txt");
        std::fs::write(&user, b"mine").unwrap();
        let legacy = dir.path().join(".tmpAbC123");
        std::fs::write(&legacy, b"old").unwrap();
        age(&legacy, 7200);

        let removed = sweep_stale(dir.path(), false);
        assert_eq!(removed, vec![dead.clone()]);
        assert!(live.path().exists() && young.exists() && user.exists() && legacy.exists());
        // In a folder orbitcnf owns, the old-style file goes too.
        assert_eq!(sweep_stale(dir.path(), true), vec![legacy]);
        assert!(live.path().exists());
        persist(live, &target).unwrap();
        assert!(target.exists());
    }

    #[test]
    fn folders_are_replaced_whole_and_foreign_folders_are_kept() {
        let top = tempfile::tempdir().unwrap();
        let dir = top.path().join("bundle");
        let is_ours = |d: &Path| d.join("manifest.json").exists();
        replace_dir(&dir, is_ours, |d| {
            std::fs::write(d.join("manifest.json"), b"1").unwrap();
            std::fs::write(d.join("stale.txt"), b"old").unwrap();
            Ok(())
        })
        .unwrap();
        replace_dir(&dir, is_ours, |d| {
            std::fs::write(d.join("manifest.json"), b"2").map_err(|e| Error::io(d, e))
        })
        .unwrap();
        assert_eq!(std::fs::read(dir.join("manifest.json")).unwrap(), b"2");
        assert!(
            !dir.join("stale.txt").exists(),
            "no file of the old folder survives"
        );
        // A failing fill leaves the old folder as it was and no litter.
        let err = replace_dir(&dir, is_ours, |_| -> Result<()> {
            Err(Error::Options("stop".into()))
        });
        assert!(err.is_err());
        assert_eq!(std::fs::read(dir.join("manifest.json")).unwrap(), b"2");
        let names: Vec<String> = std::fs::read_dir(top.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        assert_eq!(names, vec!["bundle".to_string()]);
        // A folder that orbitcnf did not write is refused.
        let home = top.path().join("home");
        std::fs::create_dir(&home).unwrap();
        std::fs::write(home.join("thesis.tex"), b"x").unwrap();
        let err = replace_dir(&home, is_ours, |_| Ok(())).unwrap_err();
        assert!(err.to_string().contains("refusing to replace"), "{err}");
        assert!(home.join("thesis.tex").exists());
    }
}
