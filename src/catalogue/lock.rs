//! One writer per catalogue: a `LOCK` file created exclusively, holding the writer's pid, host
//! and start time. A second writer is refused with a message naming the holder. A lock left
//! behind by a killed process on this host (its pid no longer exists) is taken over, so that
//! re-running an interrupted command just works. Readers never lock: they only see finished,
//! atomically renamed files.

use super::CatalogueError;
use std::fs::{self, File, OpenOptions};
use std::io::{ErrorKind, Write};
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

pub const LOCK_FILE: &str = "LOCK";

/// Held while writing; the file is removed on drop.
#[derive(Debug)]
pub struct Lock {
    path: PathBuf,
    content: String,
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

    /// True only when we can tell for sure the holder is gone: same host, and no such pid.
    fn is_stale(&self) -> bool {
        let proc_fs = Path::new("/proc/self").exists();
        self.host == host_name()
            && proc_fs
            && self.pid != std::process::id()
            && !Path::new(&format!("/proc/{}", self.pid)).exists()
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

impl Lock {
    /// Takes the lock of catalogue `dir` (which must exist).
    pub fn acquire(dir: &Path) -> Result<Lock, CatalogueError> {
        let path = dir.join(LOCK_FILE);
        let me = Holder::me().to_text();
        for _ in 0..2 {
            match OpenOptions::new().write(true).create_new(true).open(&path) {
                Ok(mut f) => {
                    write_holder(&mut f, &me).map_err(|e| CatalogueError::io("write", &path, e))?;
                    return Ok(Lock { path, content: me });
                }
                Err(e) if e.kind() == ErrorKind::AlreadyExists => {
                    take_over_if_stale(dir, &path)?;
                }
                Err(e) => return Err(CatalogueError::io("create lock", &path, e)),
            }
        }
        Err(locked(dir, &path))
    }
}

fn write_holder(f: &mut File, text: &str) -> std::io::Result<()> {
    f.write_all(text.as_bytes())?;
    f.sync_all()
}

fn locked(dir: &Path, path: &Path) -> CatalogueError {
    let text = fs::read_to_string(path).unwrap_or_default();
    let holder = Holder::parse(&text).map_or_else(
        || "an unknown process (unreadable lock file)".to_string(),
        |h| h.describe(),
    );
    CatalogueError::Locked {
        dir: dir.to_path_buf(),
        holder,
    }
}

/// Removes a lock whose holder is certainly dead; otherwise reports who holds it.
fn take_over_if_stale(dir: &Path, path: &Path) -> Result<(), CatalogueError> {
    let text = fs::read_to_string(path).unwrap_or_default();
    match Holder::parse(&text) {
        Some(h) if h.is_stale() => {
            // Rename first so that two racing takers cannot both delete a fresh lock.
            let aside = dir.join(format!("{LOCK_FILE}.stale.{}", std::process::id()));
            if fs::rename(path, &aside).is_ok() {
                let _ = fs::remove_file(&aside);
            }
            Ok(())
        }
        _ => Err(locked(dir, path)),
    }
}

impl Drop for Lock {
    fn drop(&mut self) {
        // Only remove the file if it is still ours.
        if fs::read_to_string(&self.path).is_ok_and(|t| t == self.content) {
            let _ = fs::remove_file(&self.path);
        }
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
        drop(first);
        assert!(Lock::acquire(&dir).is_ok());
        let _ = fs::remove_dir_all(&dir);
    }

    #[test]
    fn lock_of_a_dead_process_is_taken_over() {
        let dir = temp_dir("stale");
        // pid 4194305 is above Linux's pid_max limit (2^22), so no live process has it.
        let dead = Holder {
            pid: 4_194_305,
            host: host_name(),
            started: 0,
        };
        fs::write(dir.join(LOCK_FILE), dead.to_text()).expect("write");
        assert!(Lock::acquire(&dir).is_ok());
        let _ = fs::remove_dir_all(&dir);
    }

    #[test]
    fn lock_from_another_host_is_respected() {
        let dir = temp_dir("host");
        let other = Holder {
            pid: 4_194_305,
            host: "elsewhere.example".into(),
            started: 0,
        };
        fs::write(dir.join(LOCK_FILE), other.to_text()).expect("write");
        let msg = Lock::acquire(&dir).expect_err("foreign host").to_string();
        assert!(
            msg.contains("elsewhere.example") && msg.contains("1970-01-01 00:00:00 UTC"),
            "{msg}"
        );
        let _ = fs::remove_dir_all(&dir);
    }

    #[test]
    fn utc_dates() {
        // 2000-03-01 is day 11017 after 1970-01-01 (from memory: 30 years incl. 7 leap days + Jan+Feb 2000).
        assert_eq!(utc_text(11_017 * 86_400 + 3661), "2000-03-01 01:01:01 UTC");
        // 1 000 000 000 s = 2001-09-09 01:46:40 UTC (widely published "billennium").
        assert_eq!(utc_text(1_000_000_000), "2001-09-09 01:46:40 UTC");
    }
}
