//! Writing files so that a crash, a full disk or a bad name never leaves a half-written file, a replaced link or
//! device, a lost mode, an overwritten input or some of a command's outputs without the others.

use std::fs::{self, Permissions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// Write `bytes` to `path` so that a crash at any moment leaves either the old file or the new one, never half of
/// one: a temporary file beside the target (same directory, so the rename stays on one file system), written,
/// flushed and synced, then renamed over the target. A symbolic link is written through (the file it names is
/// replaced, the link stays); the target keeps its permissions; a read-only file, a folder, a device or a pipe is
/// refused, never replaced.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let target = landing(path)?;
    let staged = stage(&target, bytes)?;
    commit(&staged, &target.path)
}

/// Write every output of one command or none: each is staged beside its target first, and only when all are
/// staged are they renamed into place. Refused before anything is written: an output that is also one of
/// `inputs` (a report written over its own board file), two outputs naming one file, and the targets
/// [`write_atomically`] refuses. Errors name the file.
pub fn write_outputs(outputs: &[(&Path, &[u8])], inputs: &[&Path]) -> Result<(), String> {
    let mut targets = Vec::new();
    for (path, _) in outputs {
        let target = landing(path).map_err(|e| format!("{}: cannot write: {e}", path.display()))?;
        let same = |other: &Path| same_file(&target.path, other);
        if let Some(input) = inputs.iter().find(|i| same(i)) {
            return Err(format!(
                "{}: is also an input of this command ({}); write the output to another file",
                path.display(),
                input.display()
            ));
        }
        if targets.iter().any(|t: &Target| same(&t.path)) {
            return Err(format!("{}: named as two outputs of one command", path.display()));
        }
        targets.push(target);
    }
    let mut staged = Vec::new();
    for ((path, bytes), target) in outputs.iter().zip(&targets) {
        match stage(target, bytes) {
            Ok(tmp) => staged.push(tmp),
            Err(e) => {
                for tmp in &staged {
                    let _ = fs::remove_file(tmp);
                }
                return Err(format!("{}: cannot write: {e}", path.display()));
            }
        }
    }
    for ((tmp, target), (path, _)) in staged.iter().zip(&targets).zip(outputs) {
        commit(tmp, &target.path).map_err(|e| format!("{}: cannot write: {e}", path.display()))?;
    }
    Ok(())
}

/// Where a write really lands, and the permissions to keep.
struct Target {
    path: PathBuf,
    permissions: Option<Permissions>,
}

/// The file a write to `path` replaces: through symbolic links to the file they name; an error for a folder, a
/// device, a pipe, a read-only file or a link to nothing.
fn landing(path: &Path) -> io::Result<Target> {
    let meta = match fs::symlink_metadata(path) {
        Err(e) if e.kind() == io::ErrorKind::NotFound => {
            return Ok(Target { path: path.to_path_buf(), permissions: None });
        }
        Err(e) => return Err(e),
        Ok(m) => m,
    };
    let real = if meta.file_type().is_symlink() {
        fs::canonicalize(path)
            .map_err(|_| io::Error::other("it is a symbolic link to a file that does not exist; write to a file"))?
    } else {
        path.to_path_buf()
    };
    let meta = fs::metadata(&real)?;
    if !meta.is_file() {
        return Err(io::Error::other(
            "it is not a regular file (a folder, a device or a pipe); hushrail replaces only regular files",
        ));
    }
    if meta.permissions().readonly() {
        return Err(io::Error::other("the file is read-only; hushrail does not overwrite it"));
    }
    Ok(Target { path: real, permissions: Some(meta.permissions()) })
}

/// Whether two paths name one file (the same file through links and `..`, or the same name not yet made).
fn same_file(a: &Path, b: &Path) -> bool {
    match (fs::canonicalize(a), fs::canonicalize(b)) {
        (Ok(x), Ok(y)) => x == y,
        _ => absolute(a) == absolute(b),
    }
}

fn absolute(p: &Path) -> PathBuf {
    std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf())
}

/// Write `bytes` to a temporary file beside the target, with the target's permissions, synced.
fn stage(target: &Target, bytes: &[u8]) -> io::Result<PathBuf> {
    let dir = match target.path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = target.path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_else(|| "file".into());
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let mut file = fs::File::create(&tmp)?;
        file.write_all(bytes)?;
        file.flush()?;
        if let Some(p) = &target.permissions {
            file.set_permissions(p.clone())?;
        }
        file.sync_all()
    })();
    match result {
        Ok(()) => Ok(tmp),
        Err(e) => {
            let _ = fs::remove_file(&tmp);
            Err(e)
        }
    }
}

/// Rename a staged file over its target.
fn commit(tmp: &Path, target: &Path) -> io::Result<()> {
    fs::rename(tmp, target).inspect_err(|_| {
        let _ = fs::remove_file(tmp);
    })
}
