//! Writing an output file safely: to a temporary file beside the target,
//! then renamed into place, so a reader never sees half a file; an existing
//! file is only replaced when the caller says so.

use std::io::Write;
use std::path::{Path, PathBuf};

#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    #[error("{}: already exists (use --force to replace it)", .0.display())]
    Exists(PathBuf),
    #[error("{}: cannot write: {source}", path.display())]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
}

pub fn write_atomically(path: &Path, contents: &[u8], replace: bool) -> Result<(), WriteError> {
    if !replace && path.exists() {
        return Err(WriteError::Exists(path.to_path_buf()));
    }
    let io = |source| WriteError::Io { path: path.to_path_buf(), source };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut tmp = tempfile::NamedTempFile::new_in(&dir).map_err(io)?;
    tmp.write_all(contents).map_err(io)?;
    tmp.as_file().sync_all().map_err(io)?;
    if replace {
        tmp.persist(path).map_err(|e| io(e.error))?;
    } else {
        // persist_noclobber fails if the file appeared meanwhile.
        tmp.persist_noclobber(path).map_err(|e| match e.error.kind() {
            std::io::ErrorKind::AlreadyExists => WriteError::Exists(path.to_path_buf()),
            _ => io(e.error),
        })?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_to_overwrite_unless_asked() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.json");
        write_atomically(&path, b"one", false).unwrap();
        let err = write_atomically(&path, b"two", false).unwrap_err();
        assert!(err.to_string().contains("already exists"), "{err}");
        assert_eq!(std::fs::read(&path).unwrap(), b"one");
        write_atomically(&path, b"two", true).unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"two");
        let leftovers = std::fs::read_dir(dir.path()).unwrap().count();
        assert_eq!(leftovers, 1, "no temporary file is left behind");
    }
}
