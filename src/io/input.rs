//! Opening input files: only regular files are read.
//!
//! Opening a FIFO for reading blocks until some other process writes to it,
//! and a device or a folder is never what a user means by an input file, so
//! every reader opens its input through [`open_input`] (the check `check`
//! and `batch` make with `Path::is_file`), which refuses anything else before
//! opening it.

use std::fs::File;
use std::io::{Error, ErrorKind, Read};
use std::path::Path;

/// Open `path` for reading when it is a regular file (links are followed);
/// anything else is an [`ErrorKind::InvalidInput`] error saying what it is.
pub fn open_input(path: &Path) -> std::io::Result<File> {
    let kind = std::fs::metadata(path)?.file_type();
    if !kind.is_file() {
        let what = if kind.is_dir() {
            "a folder"
        } else {
            "not a regular file (a pipe, socket or device)"
        };
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!("{what}; expected a regular file"),
        ));
    }
    File::open(path)
}

/// The bytes of the regular file `path`.
pub fn read_input(path: &Path) -> std::io::Result<Vec<u8>> {
    let mut bytes = Vec::new();
    open_input(path)?.read_to_end(&mut bytes)?;
    Ok(bytes)
}

/// The text of the regular file `path` (UTF-8).
pub fn read_input_string(path: &Path) -> std::io::Result<String> {
    let mut text = String::new();
    open_input(path)?.read_to_string(&mut text)?;
    Ok(text)
}
