//! One writer per catalogue: an exclusive advisory lock (`flock`) on the directory's `LOCK`
//! file, which also holds the writer's pid, host and start time for the message a second writer
//! gets. The operating system drops the lock when its holder exits, however it exits, so a
//! killed writer never blocks the next run: a `LOCK` file left behind (empty, or naming a dead
//! process) is simply locked again. A directory the user cannot write to is reported as
//! read-only before any lock is tried. Readers never lock: they only see finished, atomically
//! renamed files.
//!
//! Outside Linux (where the crate has no `libc`), the lock falls back to creating `LOCK`
//! exclusively, which a killed writer leaves behind until it is deleted by hand.

use super::CatalogueError;
use std::fs::{self, File, OpenOptions};
use std::io::{ErrorKind, Write};
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

pub const LOCK_FILE: &str = "LOCK";

/// Held while writing; the file is removed, then unlocked, on drop.
#[derive(Debug)]
pub struct Lock {
    path: PathBuf,
    /// The locked open file; closing it releases the lock.
    _file: File,
}

/// Who holds a lock, as written in the file.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Holder {
    pid: u32,
    host: String,
    started: u64,
}

impl Holder {
    fn me() -> Holder {
        Holder {
            pid: std::process::id(),
            host: host_name(),
            started: SystemTime::now()
                .duration_since(UNIX_EPOCH)
                .map_or(0, |d| d.as_secs()),
        }
    }

    fn to_text(&self) -> String {
        format!(
            "pid={} host={} started={}\n",
            self.pid, self.host, self.started
        )
    }

    fn parse(text: &str) -> Option<Holder> {
        let field = |key: &str| {
            text.split_whitespace()
                .find_map(|w| w.strip_prefix(key).and_then(|v| v.strip_prefix('=')))
        };
        Some(Holder {
            pid: field("pid")?.parse().ok()?,
            host: field("host")?.to_string(),
            started: field("started")?.parse().ok()?,
        })
    }

    fn describe(&self) -> String {
        format!(
            "process {} on host {} since {}",
            self.pid,
            self.host,
            utc_text(self.started)
        )
    }
}

fn host_name() -> String {
    fs::read_to_string("/proc/sys/kernel/hostname")
        .or_else(|_| fs::read_to_string("/etc/hostname"))
        .map(|s| s.trim().to_string())
        .ok()
        .filter(|s| !s.is_empty() && !s.contains(char::is_whitespace))
        .unwrap_or_else(|| "unknown-host".to_string())
}

/// "YYYY-MM-DD hh:mm:ss UTC" from Unix seconds (days-to-civil conversion of H. Hinnant,
/// "chrono-Compatible Low-Level Date Algorithms", public domain).
fn utc_text(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + (m <= 2) as i64;
    format!(
        "{y:04}-{m:02}-{d:02} {:02}:{:02}:{:02} UTC",
        rem / 3600,
        rem / 60 % 60,
        rem % 60
    )
}

/// Errors that mean "you may not write here", as opposed to a failing disk.
fn is_read_only(e: &std::io::Error) -> bool {
    matches!(
        e.kind(),
        ErrorKind::PermissionDenied | ErrorKind::ReadOnlyFilesystem
    )
}

/// Maps a failure to create or open something in catalogue `dir`.
pub fn write_error(dir: &Path, path: &Path, e: std::io::Error) -> CatalogueError {
    if is_read_only(&e) {
        CatalogueError::ReadOnly {
            dir: dir.to_path_buf(),
        }
    } else {
        CatalogueError::io("create", path, e)
    }
}

impl Lock {
    /// Takes the lock of catalogue `dir` (which must exist).
    pub fn acquire(dir: &Path) -> Result<Lock, CatalogueError> {
        check_writable(dir)?;
        let path = dir.join(LOCK_FILE);
        // A writer that finishes unlinks LOCK while still holding it; whoever opened the old
        // file in between locks a file that is no longer there, notices, and tries again.
        for _ in 0..16 {
            let mut file = open_lock_file(dir, &path)?;
            if !try_lock(&file).map_err(|e| CatalogueError::io("lock", &path, e))? {
                return Err(locked(dir, &path));
            }
            if !still_at(&file, &path) {
                continue;
            }
            write_holder(&mut file, &Holder::me().to_text())
                .map_err(|e| CatalogueError::io("write", &path, e))?;
            return Ok(Lock { path, _file: file });
        }
        Err(locked(dir, &path))
    }
}

fn write_holder(f: &mut File, text: &str) -> std::io::Result<()> {
    f.set_len(0)?;
    f.write_all(text.as_bytes())?;
    f.sync_all()
}

fn locked(dir: &Path, path: &Path) -> CatalogueError {
    let text = fs::read_to_string(path).unwrap_or_default();
    let holder = Holder::parse(&text).map_or_else(
        || "another process (it has not written its details into LOCK yet)".to_string(),
        |h| h.describe(),
    );
    CatalogueError::Locked {
        dir: dir.to_path_buf(),
        holder,
    }
}

#[cfg(target_os = "linux")]
fn check_writable(dir: &Path) -> Result<(), CatalogueError> {
    use std::os::unix::ffi::OsStrExt;
    let Ok(c_path) = std::ffi::CString::new(dir.as_os_str().as_bytes()) else {
        return Ok(());
    };
    // SAFETY: `c_path` is a valid NUL-terminated string that outlives the call; access(2)
    // only reads it.
    let rc = unsafe { libc::access(c_path.as_ptr(), libc::W_OK) };
    if rc != 0 && is_read_only(&std::io::Error::last_os_error()) {
        return Err(CatalogueError::ReadOnly {
            dir: dir.to_path_buf(),
        });
    }
    Ok(())
}

#[cfg(target_os = "linux")]
fn open_lock_file(dir: &Path, path: &Path) -> Result<File, CatalogueError> {
    OpenOptions::new()
        .read(true)
        .write(true)
        .create(true)
        .truncate(false)
        .open(path)
        .map_err(|e| write_error(dir, path, e))
}

/// `flock(LOCK_EX | LOCK_NB)`: true if taken, false if another open file holds it.
#[cfg(target_os = "linux")]
fn try_lock(file: &File) -> std::io::Result<bool> {
    use std::os::unix::io::AsRawFd;
    // SAFETY: the descriptor belongs to `file`, which is open for the whole call.
    let rc = unsafe { libc::flock(file.as_raw_fd(), libc::LOCK_EX | libc::LOCK_NB) };
    if rc == 0 {
        return Ok(true);
    }
    let e = std::io::Error::last_os_error();
    if e.kind() == ErrorKind::WouldBlock {
        Ok(false)
    } else {
        Err(e)
    }
}

/// True if `path` still names the open `file` (same device and inode).
#[cfg(target_os = "linux")]
fn still_at(file: &File, path: &Path) -> bool {
    use std::os::unix::fs::MetadataExt;
    match (file.metadata(), fs::metadata(path)) {
        (Ok(a), Ok(b)) => a.dev() == b.dev() && a.ino() == b.ino(),
        _ => false,
    }
}

#[cfg(not(target_os = "linux"))]
fn check_writable(_dir: &Path) -> Result<(), CatalogueError> {
    Ok(())
}

#[cfg(not(target_os = "linux"))]
fn open_lock_file(dir: &Path, path: &Path) -> Result<File, CatalogueError> {
    match OpenOptions::new().write(true).create_new(true).open(path) {
        Err(e) if e.kind() == ErrorKind::AlreadyExists => Err(locked(dir, path)),
        other => other.map_err(|e| write_error(dir, path, e)),
    }
}

#[cfg(not(target_os = "linux"))]
fn try_lock(_file: &File) -> std::io::Result<bool> {
    Ok(true)
}

#[cfg(not(target_os = "linux"))]
fn still_at(_file: &File, _path: &Path) -> bool {
    true
}

impl Drop for Lock {
    fn drop(&mut self) {
        // Unlink while still holding the lock (the file closes after this), so no other writer
        // can hold a lock on a file that is about to vanish without noticing (see `acquire`).
        let _ = fs::remove_file(&self.path);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp_dir(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("cagerank-lock-{name}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).expect("temp dir");
        d
    }

    #[test]
    fn second_writer_is_refused_with_holder_named() {
        let dir = temp_dir("second");
        let first = Lock::acquire(&dir).expect("first lock");
        let err = Lock::acquire(&dir).expect_err("second lock must fail");
        let msg = err.to_string();
        assert!(
            msg.contains(&format!("process {}", std::process::id())),
            "{msg}"
        );
        assert!(msg.contains(&host_name()), "{msg}");
        assert!(!msg.contains('\n'));
        drop(first);
        assert!(
            !dir.join(LOCK_FILE).exists(),
            "a finished writer removes LOCK"
        );
        assert!(Lock::acquire(&dir).is_ok());
        let _ = fs::remove_dir_all(&dir);
    }

    #[test]
    fn an_empty_lock_file_left_by_a_killed_writer_does_not_block() {
        // A writer killed between creating LOCK and writing its details leaves an empty file.
        let dir = temp_dir("empty");
        fs::write(dir.join(LOCK_FILE), "").expect("write");
        let lock = Lock::acquire(&dir).expect("an unheld empty LOCK is taken");
        let text = fs::read_to_string(dir.join(LOCK_FILE)).expect("read");
        assert_eq!(
            Holder::parse(&text).map(|h| h.pid),
            Some(std::process::id())
        );
        drop(lock);
        let _ = fs::remove_dir_all(&dir);
    }

    #[test]
    fn a_lock_file_naming_another_process_does_not_block_unless_locked() {
        // The text is only for messages: a file naming any process, on any host, is taken
        // when no one holds the lock on it.
        let dir = temp_dir("stale");
        let other = Holder {
            pid: 4_194_305,
            host: "elsewhere.example".into(),
            started: 0,
        };
        fs::write(dir.join(LOCK_FILE), other.to_text()).expect("write");
        assert!(Lock::acquire(&dir).is_ok());
        let _ = fs::remove_dir_all(&dir);
    }

    #[test]
    fn a_held_lock_with_no_details_yet_still_blocks() {
        let dir = temp_dir("held-empty");
        let path = dir.join(LOCK_FILE);
        let file = open_lock_file(&dir, &path).expect("open");
        assert!(try_lock(&file).expect("flock"));
        let msg = Lock::acquire(&dir).expect_err("held").to_string();
        assert!(msg.contains("has not written its details"), "{msg}");
        drop(file);
        assert!(Lock::acquire(&dir).is_ok());
        let _ = fs::remove_dir_all(&dir);
    }

    #[test]
    fn permission_errors_read_as_a_read_only_catalogue() {
        let dir = Path::new("/some/catalogue");
        let e = write_error(
            dir,
            &dir.join(LOCK_FILE),
            ErrorKind::PermissionDenied.into(),
        );
        assert!(e.to_string().contains("read-only"), "{e}");
        let e = write_error(dir, &dir.join(LOCK_FILE), ErrorKind::Other.into());
        assert!(!e.to_string().contains("read-only"), "{e}");
    }

    #[test]
    fn utc_dates() {
        // 2000-03-01 is day 11017 after 1970-01-01 (from memory: 30 years incl. 7 leap days + Jan+Feb 2000).
        assert_eq!(utc_text(11_017 * 86_400 + 3661), "2000-03-01 01:01:01 UTC");
        // 1 000 000 000 s = 2001-09-09 01:46:40 UTC (widely published "billennium").
        assert_eq!(utc_text(1_000_000_000), "2001-09-09 01:46:40 UTC");
    }
}
