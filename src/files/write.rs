//! Writing outputs safely: an output is written whole or not at all (a temporary file in
//! the same folder, then renamed), never over one of the run's inputs, never over a
//! folder, and never by renaming over a device; a character device or a pipe named as
//! the output (`-o /dev/null`, `-o /dev/stdout`) is written directly. New files get the
//! ordinary permissions (0666 less the umask), not the temporary file's 0600.

use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

use super::cleanup::{self, Registered};
use crate::error::{Error, InputError, InputErrorKind, Location};

/// A file's identity: device and inode (a path compared by what it names, not by its
/// spelling).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FileId {
    dev: u64,
    ino: u64,
}

impl FileId {
    /// The identity of the file a path names (symbolic links followed), if it exists.
    pub fn of(path: &Path) -> Option<FileId> {
        let m = std::fs::metadata(path).ok()?;
        Some(Self::from_meta(&m))
    }

    #[cfg(unix)]
    fn from_meta(m: &std::fs::Metadata) -> FileId {
        use std::os::unix::fs::MetadataExt;
        FileId {
            dev: m.dev(),
            ino: m.ino(),
        }
    }

    #[cfg(not(unix))]
    fn from_meta(_m: &std::fs::Metadata) -> FileId {
        FileId { dev: 0, ino: 0 }
    }
}

/// The files a run reads, so that no output is written over one of them.
#[derive(Debug, Clone, Default)]
pub struct Inputs {
    items: Vec<(FileId, PathBuf, &'static str)>,
}

impl Inputs {
    pub fn new() -> Inputs {
        Inputs::default()
    }

    /// Add an input; `what` names it in a message ("the project file").
    pub fn add(&mut self, path: &Path, what: &'static str) {
        if let Some(id) = FileId::of(path) {
            self.items.push((id, path.to_path_buf(), what));
        }
    }

    /// Every regular file directly in a folder, as inputs (`--templates`, `--joint-classes`).
    pub fn add_folder(&mut self, dir: &Path, what: &'static str) {
        if let Ok(rd) = std::fs::read_dir(dir) {
            for e in rd.flatten() {
                self.add(&e.path(), what);
            }
        }
    }

    /// An input that lies inside the folder `dir` (at any depth), if any.
    pub fn inside(&self, dir: &Path) -> Option<&Path> {
        let d = std::fs::canonicalize(dir).ok()?;
        self.items
            .iter()
            .find(|(_, p, _)| std::fs::canonicalize(p).is_ok_and(|c| c.starts_with(&d)))
            .map(|(_, p, _)| p.as_path())
    }

    /// The input a path names, if any.
    pub fn find(&self, path: &Path) -> Option<(&Path, &'static str)> {
        let id = FileId::of(path)?;
        self.items
            .iter()
            .find(|(i, _, _)| *i == id)
            .map(|(_, p, w)| (p.as_path(), *w))
    }
}

/// How an output path is written.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Target {
    /// A regular file (existing or new) at this path: temporary file, then rename. The
    /// path is the one to rename over (a symbolic link resolved to the file it names).
    File(PathBuf),
    /// A character device or a pipe: written directly, never renamed over.
    Stream(PathBuf),
}

fn bad_target(path: &Path, message: String, hint: &str) -> Error {
    Error::Input(
        InputError::new(InputErrorKind::OutputTarget, Location::file(path), message).hint(hint),
    )
}

/// Decide how `path` is written, refusing an input, a folder, a block device or a
/// socket, and an empty name.
pub fn check_target(path: &Path, inputs: &Inputs) -> Result<Target, Error> {
    let text = path.as_os_str().to_string_lossy();
    if text.is_empty() {
        return Err(bad_target(
            path,
            "the output path is empty".into(),
            "give a file name, e.g. -o results.json",
        ));
    }
    if text.ends_with('/') || path.file_name().is_none() {
        return Err(bad_target(
            path,
            "names a folder, not an output file".into(),
            "give a file name inside the folder, e.g. -o out/results.json",
        ));
    }
    if let Some((input, what)) = inputs.find(path) {
        let same = if input == path {
            String::new()
        } else {
            format!(" ({})", input.display())
        };
        return Err(bad_target(
            path,
            format!("is {what}{same}; seamlife never writes an output over one of its inputs"),
            "choose another output name",
        ));
    }
    let link = std::fs::symlink_metadata(path).ok();
    let Some(meta) = std::fs::metadata(path).ok() else {
        // New file (or a dangling link, replaced as a new file).
        return Ok(Target::File(path.to_path_buf()));
    };
    let ft = meta.file_type();
    if ft.is_dir() {
        return Err(bad_target(
            path,
            "is a folder; seamlife will not replace a folder with a file".into(),
            "give a file name inside the folder, e.g. -o out/results.json",
        ));
    }
    if ft.is_file() {
        let is_link = link.is_some_and(|l| l.file_type().is_symlink());
        if is_link {
            // Written through the link: the file it names is replaced, the link stays.
            let real = std::fs::canonicalize(path).map_err(|source| Error::Output {
                path: path.to_path_buf(),
                source,
            })?;
            return Ok(Target::File(real));
        }
        return Ok(Target::File(path.to_path_buf()));
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if ft.is_char_device() || ft.is_fifo() {
            return Ok(Target::Stream(path.to_path_buf()));
        }
        if ft.is_block_device() {
            return Err(bad_target(
                path,
                "is a block device (a disk); seamlife will not write to it".into(),
                "give an ordinary file name",
            ));
        }
    }
    Err(bad_target(
        path,
        "is not a regular file, a character device or a pipe".into(),
        "give an ordinary file name",
    ))
}

/// The process umask, read once (Linux reports it in /proc; elsewhere it is read by
/// setting and restoring it).
pub fn umask() -> u32 {
    static MASK: std::sync::OnceLock<u32> = std::sync::OnceLock::new();
    *MASK.get_or_init(|| {
        if let Ok(s) = std::fs::read_to_string("/proc/self/status") {
            if let Some(v) = s
                .lines()
                .find_map(|l| l.strip_prefix("Umask:"))
                .and_then(|v| u32::from_str_radix(v.trim(), 8).ok())
            {
                return v;
            }
        }
        #[cfg(unix)]
        {
            // SAFETY: umask only swaps the process's file-mode mask; it is set back at once.
            unsafe {
                let old = libc::umask(0o022);
                libc::umask(old);
                old as u32
            }
        }
        #[cfg(not(unix))]
        0o022
    })
}

/// Give a finished temporary file the permissions an ordinary new file would have: those
/// of the file it replaces, or 0666 less the umask.
fn set_output_mode(tmp: &File, replaces: Option<&Path>) -> std::io::Result<()> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = match replaces.and_then(|p| std::fs::metadata(p).ok()) {
            Some(m) if m.is_file() => m.permissions().mode() & 0o7777,
            _ => 0o666 & !umask(),
        };
        tmp.set_permissions(std::fs::Permissions::from_mode(mode))?;
    }
    #[cfg(not(unix))]
    let _ = (tmp, replaces);
    Ok(())
}

/// Open a character device or a pipe for writing without blocking on the open (a pipe
/// that nobody reads fails at once), then write normally.
fn open_stream(path: &Path) -> std::io::Result<File> {
    let mut o = std::fs::OpenOptions::new();
    o.write(true);
    #[cfg(unix)]
    {
        use std::os::fd::AsRawFd;
        use std::os::unix::fs::OpenOptionsExt;
        o.custom_flags(libc::O_NONBLOCK);
        let f = o.open(path)?;
        // SAFETY: fcntl on a file descriptor this function owns; only the status flags
        // are read and O_NONBLOCK cleared, so later writes wait instead of failing.
        unsafe {
            let fd = f.as_raw_fd();
            let flags = libc::fcntl(fd, libc::F_GETFL);
            if flags >= 0 {
                libc::fcntl(fd, libc::F_SETFL, flags & !libc::O_NONBLOCK);
            }
        }
        Ok(f)
    }
    #[cfg(not(unix))]
    o.open(path)
}

/// An output being written: a registered temporary file that becomes the output on
/// [`PendingFile::commit`] and disappears if dropped before.
#[derive(Debug)]
pub struct PendingFile {
    tmp: tempfile::NamedTempFile,
    target: Target,
    shown: PathBuf,
    _reg: Registered,
}

impl PendingFile {
    /// Check `path` against `inputs` and open a temporary file for it (beside it, or in
    /// the temporary folder for a device or a pipe).
    pub fn new(path: &Path, inputs: &Inputs, suffix: &str) -> Result<PendingFile, Error> {
        let target = check_target(path, inputs)?;
        let dir = match &target {
            Target::File(p) => match p.parent() {
                Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
                _ => PathBuf::from("."),
            },
            Target::Stream(_) => std::env::temp_dir(),
        };
        let tmp = tempfile::Builder::new()
            .prefix(".seamlife-")
            .suffix(suffix)
            .tempfile_in(&dir)
            .map_err(|source| Error::Output {
                path: path.to_path_buf(),
                source,
            })?;
        let reg = cleanup::register(tmp.path(), false);
        Ok(PendingFile {
            tmp,
            target,
            shown: path.to_path_buf(),
            _reg: reg,
        })
    }

    /// The temporary file's path (for a program that writes the output itself).
    pub fn path(&self) -> &Path {
        self.tmp.path()
    }

    /// The temporary file, to write into.
    pub fn file(&mut self) -> &mut File {
        self.tmp.as_file_mut()
    }

    /// The output's path as the user gave it.
    pub fn target(&self) -> &Path {
        &self.shown
    }

    /// Make the temporary file the output: rename it over a file, or copy it into a
    /// device or pipe.
    pub fn commit(self) -> Result<(), Error> {
        let shown = self.shown.clone();
        let out_err = |source| Error::Output {
            path: shown.clone(),
            source,
        };
        let mut tmp = self.tmp;
        tmp.as_file_mut().flush().map_err(out_err)?;
        match &self.target {
            Target::File(real) => {
                if std::fs::metadata(real).is_ok_and(|m| m.is_dir()) {
                    return Err(bad_target(
                        &shown,
                        "became a folder while the output was written".into(),
                        "give a file name",
                    ));
                }
                set_output_mode(tmp.as_file(), Some(real)).map_err(out_err)?;
                tmp.as_file().sync_all().map_err(out_err)?;
                tmp.persist(real).map_err(|e| out_err(e.error))?;
            }
            Target::Stream(dev) => {
                use std::io::{Seek, SeekFrom};
                let f = tmp.as_file_mut();
                f.seek(SeekFrom::Start(0)).map_err(out_err)?;
                let mut out = open_stream(dev).map_err(out_err)?;
                std::io::copy(f, &mut out).map_err(out_err)?;
                out.flush().map_err(out_err)?;
            }
        }
        Ok(())
    }
}

/// Write a file whole or not at all (see the module notes); no inputs to protect.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    write_output(path, bytes, &Inputs::new())
}

/// Write a file whole or not at all, refusing to write over any of `inputs`.
pub fn write_output(path: &Path, bytes: &[u8], inputs: &Inputs) -> Result<(), Error> {
    let mut p = PendingFile::new(path, inputs, ".part")?;
    let shown = path.to_path_buf();
    p.file().write_all(bytes).map_err(|source| Error::Output {
        path: shown.clone(),
        source,
    })?;
    p.commit()
}

/// Write a file whole or not at all, refusing an existing file of that name (and the
/// same checks as [`write_output`]).
pub fn write_new(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    if std::fs::symlink_metadata(path).is_ok() {
        return Err(bad_target(
            path,
            "already exists; seamlife will not overwrite it".into(),
            "choose a new name or folder",
        ));
    }
    let mut p = PendingFile::new(path, &Inputs::new(), ".part")?;
    let out_err = |source| Error::Output {
        path: path.to_path_buf(),
        source,
    };
    p.file().write_all(bytes).map_err(out_err)?;
    p.file().flush().map_err(out_err)?;
    set_output_mode(p.tmp.as_file(), None).map_err(out_err)?;
    p.tmp.as_file().sync_all().map_err(out_err)?;
    let PendingFile { tmp, _reg, .. } = p;
    tmp.persist_noclobber(path).map_err(|e| out_err(e.error))?;
    drop(_reg);
    Ok(())
}
