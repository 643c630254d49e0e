//! Where a command's output goes, and the promises kept on the way: an output never replaces
//! one of the command's inputs, a device, a FIFO or a read-only file, and a file appears only
//! when complete.
//!
//! An ordinary file (new, or existing and writable) is written to a temporary file beside it,
//! flushed to disk, then renamed over it; a symbolic link is followed and its target replaced,
//! so the link stays. Standard output, character devices (`/dev/null`, a terminal) and FIFOs
//! are written directly, once the whole output is ready (or, past 64 MiB, as it is rendered:
//! memory follows the data). Folders, block devices, sockets and files without
//! write permission are refused before anything is computed. SIGINT, SIGTERM and SIGHUP remove
//! the temporary file before the process ends.

use std::fs::{File, Metadata};
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use anyhow::{bail, Context};
use clap::{Args, ValueEnum};

/// Output formats.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// Aligned tables for people.
    Text,
    /// Comma-separated values, one row per item.
    Csv,
    /// One JSON document.
    Json,
}

/// Where the output goes.
#[derive(Args, Debug, Clone)]
pub struct OutputArgs {
    /// Write to FILE instead of standard output (`-` is standard output); the file appears
    /// only when complete.
    #[arg(long, short = 'o', value_name = "FILE", visible_alias = "out")]
    pub output: Option<PathBuf>,
}

/// What a command renders its output into: a temporary file beside the target, or memory when
/// the output goes to standard output, a device or a FIFO (written at once when complete, or
/// as it comes past 64 MiB).
pub struct Sink<'a>(Box<dyn Write + 'a>);

impl Write for Sink<'_> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.0.write(buf)
    }

    fn write_all(&mut self, buf: &[u8]) -> std::io::Result<()> {
        self.0.write_all(buf)
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.0.flush()
    }
}

/// What `--output` names, once symbolic links are followed.
enum Target {
    /// An ordinary file, existing (with its metadata) or not: replaced by a rename.
    Replace {
        path: PathBuf,
        existing: Option<Metadata>,
    },
    /// A character device or a FIFO: opened and written in place.
    Direct(PathBuf),
}

impl OutputArgs {
    /// The file named, or `None` for standard output (no name, or `-` as is common practice
    /// for command-line tools).
    fn file(&self) -> Option<&Path> {
        self.output
            .as_deref()
            .filter(|path| *path != Path::new("-"))
    }

    /// Checks, before any work is done, that the output can be written and is none of
    /// `inputs` (file names, `-` for standard input), compared by file identity so that another
    /// name, a link or a `./` prefix does not hide an input.
    pub fn check<P: AsRef<Path>>(&self, inputs: impl IntoIterator<Item = P>) -> anyhow::Result<()> {
        let Some(path) = self.file() else {
            return Ok(());
        };
        // Writing into a device or a FIFO destroys nothing: only an ordinary file can be an
        // input that the output would replace (a terminal may well be both).
        let Target::Replace {
            existing: Some(_), ..
        } = target(path)?
        else {
            return Ok(());
        };
        let Some(output) = identity(path) else {
            return Ok(());
        };
        for input in inputs {
            let input = input.as_ref();
            if input_identity(input) == Some(output) {
                let input = if input == Path::new("-") {
                    "standard input".to_string()
                } else {
                    input.display().to_string()
                };
                return Err(switchyard::Error::Parameter(format!(
                    "the output {} is the input {input}; refusing to overwrite an input \
                     (choose another output file)",
                    path.display()
                ))
                .into());
            }
        }
        Ok(())
    }

    /// Renders the output with `render` and writes it: atomically to an ordinary file (a
    /// temporary file beside it, synced, renamed over it), or at once to standard output, a
    /// device or a FIFO. On an error or a signal the temporary file is removed and the target
    /// left as it was.
    pub fn emit(&self, render: impl FnOnce(&mut Sink) -> anyhow::Result<()>) -> anyhow::Result<()> {
        let Some(path) = self.file() else {
            return spilled(render, || Ok(std::io::stdout().lock()))
                .context("writing to standard output");
        };
        match target(path)? {
            Target::Direct(device) => spilled(render, || {
                // No truncation and no creation: a device or FIFO is written, never made.
                std::fs::OpenOptions::new()
                    .write(true)
                    .open(&device)
                    .with_context(|| format!("{}: cannot open for writing", path.display()))
            })
            .with_context(|| format!("{}: write failed", path.display())),
            Target::Replace {
                path: resolved,
                existing,
            } => replace(path, &resolved, existing.as_ref(), render),
        }
    }
}

/// Whether two output paths name the same file: by identity when both exist, else by the
/// folder (links followed) and the name.
pub fn same_output(a: &Path, b: &Path) -> bool {
    match (identity(a), identity(b)) {
        (Some(a), Some(b)) => a == b,
        (None, None) => match (planned_location(a), planned_location(b)) {
            (Some(a), Some(b)) => a == b,
            _ => a == b,
        },
        _ => false,
    }
}

/// Where a file that does not exist yet would be created: its folder with links resolved, and
/// its name (after following a dangling link).
fn planned_location(path: &Path) -> Option<PathBuf> {
    let path = follow_links(path).ok()?;
    let name = path.file_name()?;
    let folder = folder_of(&path).canonicalize().ok()?;
    Some(folder.join(name))
}

/// Output held in memory before standard output, a device or a FIFO gets any of it: an error
/// while rendering (which the commands find before they write) then leaves nothing behind.
/// Output larger than this is passed on as it is rendered, so that memory follows the data,
/// not the output (a per-step table over millions of steps).
const HOLD_AT_MOST: usize = 64 << 20;

/// Renders into memory up to [`HOLD_AT_MOST`] bytes, then opens the target with `open` and
/// passes the rest on as it comes; a reader that has gone (a closed pipe) is not an error, as
/// for any filter whose reader stops early.
fn spilled<W: Write>(
    render: impl FnOnce(&mut Sink) -> anyhow::Result<()>,
    open: impl FnOnce() -> anyhow::Result<W>,
) -> anyhow::Result<()> {
    let mut spill = Spill {
        held: Vec::new(),
        open: Some(open),
        out: None,
        gone: false,
    };
    {
        let mut sink = Sink(Box::new(&mut spill));
        render(&mut sink)?;
    }
    spill.pass_on()?;
    if let Some(out) = spill.out.as_mut() {
        if !spill.gone {
            match out.flush() {
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {}
                result => result?,
            }
        }
    }
    Ok(())
}

/// The writer behind [`spilled`].
struct Spill<W: Write, F> {
    held: Vec<u8>,
    open: Option<F>,
    out: Option<BufWriter<W>>,
    /// The reader has gone: the rest is dropped.
    gone: bool,
}

impl<W: Write, F: FnOnce() -> anyhow::Result<W>> Spill<W, F> {
    /// Opens the target if need be and writes what is held.
    fn pass_on(&mut self) -> std::io::Result<()> {
        if self.out.is_none() {
            let open = self.open.take().expect("opened once");
            let file = open().map_err(|e| std::io::Error::other(format!("{e:#}")))?;
            self.out = Some(BufWriter::with_capacity(1 << 16, file));
        }
        let held = std::mem::take(&mut self.held);
        self.send(&held)
    }

    fn send(&mut self, bytes: &[u8]) -> std::io::Result<()> {
        if self.gone {
            return Ok(());
        }
        let out = self.out.as_mut().expect("opened");
        match out.write_all(bytes) {
            Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {
                self.gone = true;
                Ok(())
            }
            result => result,
        }
    }
}

impl<W: Write, F: FnOnce() -> anyhow::Result<W>> Write for Spill<W, F> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        if self.out.is_some() {
            self.send(buf)?;
        } else {
            self.held.extend_from_slice(buf);
            if self.held.len() > HOLD_AT_MOST {
                self.pass_on()?;
            }
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

/// The folder a file is in (`.` for a bare name).
fn folder_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Follows symbolic links from `path` to a path that is not one (it may not exist: writing
/// through a dangling link creates its target, as a shell redirection does).
fn follow_links(path: &Path) -> anyhow::Result<PathBuf> {
    let mut current = path.to_path_buf();
    // The kernel's own limit on links in one lookup.
    for _ in 0..40 {
        match std::fs::symlink_metadata(&current) {
            Ok(meta) if meta.file_type().is_symlink() => {
                let link = std::fs::read_link(&current)
                    .with_context(|| format!("{}: cannot read the link", current.display()))?;
                current = match current.parent() {
                    Some(parent) => parent.join(link),
                    None => link,
                };
            }
            _ => return Ok(current),
        }
    }
    bail!("{}: too many levels of symbolic links", path.display())
}

/// Classifies the output path, refusing what must not be written or replaced. The system
/// follows links first, so that links it resolves itself (`/dev/stdout`) work too.
fn target(path: &Path) -> anyhow::Result<Target> {
    let meta = match std::fs::metadata(path) {
        Ok(meta) => meta,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            // A new file, or a dangling link whose target is to be created.
            return Ok(Target::Replace {
                path: follow_links(path)?,
                existing: None,
            });
        }
        Err(e) => return Err(e).with_context(|| format!("{}: cannot examine", path.display())),
    };
    let kind = meta.file_type();
    if kind.is_dir() {
        bail!(
            "{}: is a folder; give a file name for the output",
            path.display()
        );
    }
    if !kind.is_file() {
        return special_target(path, &meta);
    }
    if read_only(path, &meta) {
        bail!(
            "{}: the file is read-only (no write permission); not replacing it",
            path.display()
        );
    }
    let linked = std::fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink());
    let resolved = if linked {
        path.canonicalize()
            .with_context(|| format!("{}: cannot follow the link", path.display()))?
    } else {
        path.to_path_buf()
    };
    Ok(Target::Replace {
        path: resolved,
        existing: Some(meta),
    })
}

#[cfg(unix)]
fn special_target(path: &Path, meta: &Metadata) -> anyhow::Result<Target> {
    use std::os::unix::fs::FileTypeExt;
    let kind = meta.file_type();
    if kind.is_char_device() || kind.is_fifo() {
        return Ok(Target::Direct(path.to_path_buf()));
    }
    let what = if kind.is_block_device() {
        "a block device"
    } else if kind.is_socket() {
        "a socket"
    } else {
        "not an ordinary file"
    };
    bail!("{}: is {what}; not writing output to it", path.display())
}

#[cfg(not(unix))]
fn special_target(path: &Path, _: &Metadata) -> anyhow::Result<Target> {
    bail!(
        "{}: is not an ordinary file; not writing output to it",
        path.display()
    )
}

/// Whether the permission bits forbid writing: no write bit at all (which root would ignore if
/// we only tried to open it), or none for this user.
#[cfg(unix)]
fn read_only(path: &Path, meta: &Metadata) -> bool {
    use std::os::unix::fs::PermissionsExt;
    meta.permissions().mode() & 0o222 == 0
        || rustix::fs::access(path, rustix::fs::Access::WRITE_OK).is_err()
}

#[cfg(not(unix))]
fn read_only(_: &Path, meta: &Metadata) -> bool {
    meta.permissions().readonly()
}

/// A file's identity (device and inode), following links; `None` when it does not exist.
#[cfg(unix)]
fn identity(path: &Path) -> Option<(u64, u64)> {
    use std::os::unix::fs::MetadataExt;
    std::fs::metadata(path).ok().map(|m| (m.dev(), m.ino()))
}

#[cfg(not(unix))]
fn identity(path: &Path) -> Option<PathBuf> {
    path.canonicalize().ok()
}

/// An input's identity; `-` is standard input, which may be redirected from a file.
#[cfg(unix)]
fn input_identity(input: &Path) -> Option<(u64, u64)> {
    if input == Path::new("-") {
        let stat = rustix::fs::fstat(std::io::stdin()).ok()?;
        return Some((stat.st_dev as u64, stat.st_ino as u64));
    }
    identity(input)
}

#[cfg(not(unix))]
fn input_identity(input: &Path) -> Option<PathBuf> {
    identity(input)
}

/// Writes `render`'s output to a temporary file in `resolved`'s folder and renames it over
/// `resolved`; `shown` is the name the user gave, for messages.
fn replace(
    shown: &Path,
    resolved: &Path,
    existing: Option<&Metadata>,
    render: impl FnOnce(&mut Sink) -> anyhow::Result<()>,
) -> anyhow::Result<()> {
    let dir = folder_of(resolved);
    let name = resolved
        .file_name()
        .with_context(|| format!("{}: not a file name", shown.display()))?;
    let prefix = format!(".{}.", name.to_string_lossy());
    let temp = cleanup::create(&dir, |dir| {
        tempfile::Builder::new()
            .prefix(&prefix)
            .suffix(".part")
            .tempfile_in(dir)
    })
    .with_context(|| format!("{}: cannot create a file here", dir.display()))?;
    let failed = |what: &str| format!("{}: {what}", shown.display());
    {
        let mut sink = Sink(Box::new(BufWriter::new(temp.as_file())));
        render(&mut sink)?;
        sink.flush().with_context(|| failed("write failed"))?;
    }
    let file = temp.as_file();
    // A temporary file is private; give the result the permissions of the file it replaces,
    // or those of an ordinary new file.
    let permissions = match existing {
        Some(meta) => meta.permissions(),
        None => ordinary_permissions(file)?,
    };
    file.set_permissions(permissions)
        .with_context(|| failed("cannot set permissions"))?;
    keep_owner(file, existing);
    file.sync_all()
        .with_context(|| failed("cannot flush to disk"))?;
    temp.persist(resolved)
        .with_context(|| failed("cannot write the file"))?;
    // Make the rename itself durable; a folder that cannot be synced is not an error.
    if let Ok(folder) = File::open(&dir) {
        let _ = folder.sync_all();
    }
    Ok(())
}

#[cfg(unix)]
fn ordinary_permissions(file: &File) -> anyhow::Result<std::fs::Permissions> {
    use std::os::unix::fs::PermissionsExt;
    let mut permissions = file.metadata()?.permissions();
    permissions.set_mode(0o644);
    Ok(permissions)
}

#[cfg(not(unix))]
fn ordinary_permissions(file: &File) -> anyhow::Result<std::fs::Permissions> {
    Ok(file.metadata()?.permissions())
}

/// Gives the new file the owner and group of the file it replaces, when this user may (root
/// replacing another user's file); otherwise the new file stays this user's.
#[cfg(unix)]
fn keep_owner(file: &File, existing: Option<&Metadata>) {
    use std::os::unix::fs::MetadataExt;
    if let (Some(old), Ok(new)) = (existing, file.metadata()) {
        if (old.uid(), old.gid()) != (new.uid(), new.gid()) {
            let _ = std::os::unix::fs::fchown(file, Some(old.uid()), Some(old.gid()));
        }
    }
}

#[cfg(not(unix))]
fn keep_owner(_: &File, _: Option<&Metadata>) {}

/// Temporary files that a signal must remove: registered while they exist, watched by one
/// thread that removes them on SIGINT, SIGTERM or SIGHUP and then ends the process the way
/// the signal would have.
mod cleanup {
    use std::path::{Path, PathBuf};
    use std::sync::{Mutex, MutexGuard};

    use tempfile::NamedTempFile;

    static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

    fn pending() -> MutexGuard<'static, Vec<PathBuf>> {
        PENDING
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
    }

    /// A temporary file known to the signal watcher until it is renamed or dropped.
    pub struct Registered {
        file: Option<NamedTempFile>,
    }

    /// Creates a temporary file with `make`, registered before a signal can see it unlisted.
    pub fn create(
        dir: &Path,
        make: impl FnOnce(&Path) -> std::io::Result<NamedTempFile>,
    ) -> std::io::Result<Registered> {
        watch_signals();
        let mut list = pending();
        let file = make(dir)?;
        list.push(file.path().to_path_buf());
        Ok(Registered { file: Some(file) })
    }

    impl Registered {
        /// The open temporary file.
        pub fn as_file(&self) -> &std::fs::File {
            self.file
                .as_ref()
                .expect("present until persisted")
                .as_file()
        }

        /// Renames the file over `target`. The list is held meanwhile, so that a signal sees
        /// either the temporary file or the finished target.
        pub fn persist(mut self, target: &Path) -> std::io::Result<()> {
            let file = self.file.take().expect("present until persisted");
            let mut list = pending();
            let path = file.path().to_path_buf();
            // On failure the error holds the temporary file; dropping it removes the file.
            let result = file.persist(target).map(|_| ()).map_err(|e| e.error);
            list.retain(|p| *p != path);
            result
        }
    }

    impl Drop for Registered {
        fn drop(&mut self) {
            if let Some(file) = self.file.take() {
                // Removed and unlisted together, so a signal never finds it unlisted.
                let mut list = pending();
                let path = file.path().to_path_buf();
                drop(file);
                list.retain(|p| *p != path);
            }
        }
    }

    #[cfg(unix)]
    fn watch_signals() {
        use signal_hook::consts::signal::{SIGHUP, SIGINT, SIGTERM};
        use signal_hook::iterator::Signals;
        static WATCHING: std::sync::Once = std::sync::Once::new();
        WATCHING.call_once(|| {
            // Without a watcher a signal still ends the process; only the cleanup is lost.
            let Ok(mut signals) = Signals::new([SIGINT, SIGTERM, SIGHUP]) else {
                return;
            };
            std::thread::spawn(move || {
                if let Some(signal) = signals.forever().next() {
                    let list = pending();
                    for path in list.iter() {
                        let _ = std::fs::remove_file(path);
                    }
                    let _ = signal_hook::low_level::emulate_default_handler(signal);
                    std::process::exit(128 + signal);
                }
            });
        });
    }

    #[cfg(not(unix))]
    fn watch_signals() {}
}
