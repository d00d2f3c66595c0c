//! The tables a rule file reads (`members NAME from "FILE"`), found beside
//! the rule file. The command line and the Python package read them the
//! same way: at most [`MAX_TABLE_LEN`] bytes each, paths relative to the
//! rule file's folder.

use std::path::{Path, PathBuf};

use clout_dsl::data::MAX_TABLE_LEN;
use clout_dsl::Tables;

/// Reads at most one byte more than `limit` (what the language accepts), so
/// a huge or endless input (`/dev/zero`) is refused without reading it all.
pub fn read_bounded(reader: impl std::io::Read, limit: usize) -> std::io::Result<Vec<u8>> {
    let mut bytes = Vec::new();
    std::io::Read::read_to_end(&mut reader.take(limit as u64 + 1), &mut bytes)?;
    Ok(bytes)
}

/// An I/O error in the words of the command line's messages.
pub fn describe_io(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".to_string(),
        std::io::ErrorKind::InvalidData => "the file is not UTF-8 text".to_string(),
        std::io::ErrorKind::PermissionDenied => "permission denied".to_string(),
        _ => e.to_string(),
    }
}

/// Tables read from files relative to a rule file's folder. Without a
/// folder (rule text from standard input or a string) only absolute paths
/// are read: a relative one has nothing to be relative to.
pub struct Folder {
    base: Option<PathBuf>,
}

impl Folder {
    /// Tables beside the rule file at `rule_file`.
    pub fn beside(rule_file: &Path) -> Folder {
        Folder::at(rule_file.parent().map(Path::to_path_buf).unwrap_or_default())
    }

    /// Tables in the folder `dir`.
    pub fn at(dir: PathBuf) -> Folder {
        Folder { base: Some(dir) }
    }

    /// Tables named by absolute paths only.
    pub fn none() -> Folder {
        Folder { base: None }
    }
}

impl Tables for Folder {
    fn table(&mut self, path: &str) -> Result<(String, Vec<u8>), String> {
        let full = match &self.base {
            Some(dir) => dir.join(path),
            None if Path::new(path).is_absolute() => PathBuf::from(path),
            None => {
                return Err(
                    "rule text that is not read from a file has no folder for relative paths; save it beside its tables, or name them by absolute paths"
                        .to_string(),
                )
            }
        };
        let bytes = std::fs::File::open(&full)
            .and_then(|f| read_bounded(f, MAX_TABLE_LEN))
            .map_err(|e| format!("{} ({})", describe_io(&e), full.display()))?;
        Ok((full.display().to_string(), bytes))
    }
}
