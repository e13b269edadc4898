//! The memory budget: given by the user, or from the tightest limit the process runs under.
//!
//! Limits looked at, all of them (the smallest wins, since any one of them ends the run):
//!
//! - the cgroup of the process (what batch schedulers and containers set): v2 `memory.max`,
//!   v1 `memory.limit_in_bytes`, of its own cgroup and every parent up to the root (a parent's
//!   limit binds its children too);
//! - SLURM's allocation: `SLURM_MEM_PER_NODE`, or `SLURM_MEM_PER_CPU` times the CPUs allocated
//!   on the node (`SLURM_CPUS_ON_NODE`, else `SLURM_CPUS_PER_TASK`, else 1), megabytes unless
//!   a unit is given (SLURM's convention);
//! - the address-space limit, `RLIMIT_AS` (`ulimit -v`), from `/proc/self/limits`;
//! - the machine's physical memory, `MemTotal` of `/proc/meminfo`.
//!
//! The budget is the limit less a margin for what the estimate does not count (the program
//! itself, thread stacks, the allocator's own reserve, the page cache a cgroup charges): a tenth
//! of the limit, and at least [`MIN_MARGIN`], plus, under an address-space limit, the address
//! space glibc reserves per thread for its allocator arenas ([`ARENA_RESERVE`]), which counts
//! against `RLIMIT_AS` although it is never touched.

use super::{Bytes, MIB, parse_size};
use std::fmt;
use std::path::{Path, PathBuf};

/// Smallest margin left below a detected limit, bytes.
pub const MIN_MARGIN: u64 = 256 * MIB;
/// Address space one thread's glibc malloc arena reserves (64 MiB on 64-bit Linux, common
/// knowledge about glibc), counted under an address-space limit only.
pub const ARENA_RESERVE: u64 = 64 * MIB;
/// Limits at or above this mean "none" (cgroup v1 writes 2⁶³ rounded down to a page).
const UNLIMITED: u64 = 1 << 62;

/// Where a memory budget came from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum BudgetSource {
    /// Given by the user (`--memory`, or `memory:` in a workflow).
    Given,
    /// A cgroup's `memory.max` (v2) or `memory.limit_in_bytes` (v1), in this file.
    Cgroup(PathBuf),
    /// `SLURM_MEM_PER_NODE`.
    SlurmPerNode,
    /// `SLURM_MEM_PER_CPU` times this many CPUs.
    SlurmPerCpu(u64),
    /// The address-space limit (`ulimit -v`).
    AddressSpace,
    /// The machine's physical memory.
    PhysicalMemory,
}

impl BudgetSource {
    /// The limit `limit` (bytes) from this source, in words: `the cgroup limit of 16.0 GiB, in
    /// /sys/fs/cgroup/…/memory.max`.
    fn describe(&self, limit: u64) -> String {
        let l = Bytes(limit);
        match self {
            BudgetSource::Given => format!("{l}, as given"),
            BudgetSource::Cgroup(path) => format!("the cgroup limit of {l}, in {}", path.display()),
            BudgetSource::SlurmPerNode => format!("SLURM_MEM_PER_NODE, {l}"),
            BudgetSource::SlurmPerCpu(cpus) => format!("SLURM_MEM_PER_CPU for {cpus} CPUs, {l}"),
            BudgetSource::AddressSpace => format!("the address-space limit (ulimit -v) of {l}"),
            BudgetSource::PhysicalMemory => format!("the machine's memory, {l} in /proc/meminfo"),
        }
    }
}

/// How much memory the files of a run may use at once, and why.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MemoryBudget {
    /// Bytes the estimates of files in flight may add up to.
    pub bytes: u64,
    /// The limit it was derived from, bytes (equal to `bytes` when given).
    pub limit: u64,
    /// Where the limit came from.
    pub source: BudgetSource,
}

impl MemoryBudget {
    /// A budget the user gave: used as it is.
    pub fn given(bytes: u64) -> MemoryBudget {
        MemoryBudget { bytes, limit: bytes, source: BudgetSource::Given }
    }

    /// The budget from the tightest limit this process runs under with `threads` worker
    /// threads, or `None` where no limit can be read (not Linux, say).
    pub fn detect(threads: usize) -> Option<MemoryBudget> {
        Limits::read().budget(threads)
    }
}

impl fmt::Display for MemoryBudget {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        match self.source {
            BudgetSource::Given => write!(f, "{} (as given)", Bytes(self.bytes)),
            _ => write!(f, "{} ({}, less a margin)", Bytes(self.bytes), self.source.describe(self.limit)),
        }
    }
}

/// The raw material of the detection, so that it can be tested with values of our choosing.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Limits {
    /// Each cgroup limit file that exists, with its contents.
    pub cgroup_files: Vec<(PathBuf, String)>,
    /// `SLURM_MEM_PER_NODE`, `SLURM_MEM_PER_CPU`, `SLURM_CPUS_ON_NODE`, `SLURM_CPUS_PER_TASK`.
    pub slurm: [Option<String>; 4],
    /// The text of `/proc/self/limits`.
    pub proc_limits: Option<String>,
    /// The text of `/proc/meminfo`.
    pub meminfo: Option<String>,
}

impl Limits {
    /// Reads the limits of this process.
    pub fn read() -> Limits {
        let root = Path::new("/sys/fs/cgroup");
        let membership = std::fs::read_to_string("/proc/self/cgroup").unwrap_or_default();
        let cgroup_files = cgroup_limit_files(root, &membership)
            .into_iter()
            .filter_map(|p| std::fs::read_to_string(&p).ok().map(|text| (p, text)))
            .collect();
        let var = |name: &str| std::env::var(name).ok();
        Limits {
            cgroup_files,
            slurm: [var("SLURM_MEM_PER_NODE"), var("SLURM_MEM_PER_CPU"), var("SLURM_CPUS_ON_NODE"), var("SLURM_CPUS_PER_TASK")],
            proc_limits: std::fs::read_to_string("/proc/self/limits").ok(),
            meminfo: std::fs::read_to_string("/proc/meminfo").ok(),
        }
    }

    /// Every limit found, bytes, with its source, in the order of the module docs.
    pub fn found(&self) -> Vec<(u64, BudgetSource)> {
        let mut out = Vec::new();
        for (path, text) in &self.cgroup_files {
            if let Some(bytes) = cgroup_limit(text) {
                out.push((bytes, BudgetSource::Cgroup(path.clone())));
            }
        }
        if let Some(s) = self.slurm_limit() {
            out.push(s);
        }
        if let Some(bytes) = self.proc_limits.as_deref().and_then(address_space_limit) {
            out.push((bytes, BudgetSource::AddressSpace));
        }
        if let Some(bytes) = self.meminfo.as_deref().and_then(physical_memory) {
            out.push((bytes, BudgetSource::PhysicalMemory));
        }
        out
    }

    /// The budget under the tightest limit found, for `threads` worker threads.
    pub fn budget(&self, threads: usize) -> Option<MemoryBudget> {
        let (limit, source) = self.found().into_iter().min_by_key(|(b, _)| *b)?;
        let mut margin = (limit / 10).max(MIN_MARGIN);
        if source == BudgetSource::AddressSpace {
            margin += ARENA_RESERVE * (threads as u64 + 1);
        }
        Some(MemoryBudget { bytes: limit.saturating_sub(margin), limit, source })
    }

    fn slurm_limit(&self) -> Option<(u64, BudgetSource)> {
        let [per_node, per_cpu, on_node, per_task] = &self.slurm;
        if let Some(bytes) = per_node.as_deref().and_then(slurm_size) {
            return Some((bytes, BudgetSource::SlurmPerNode));
        }
        let per_cpu = per_cpu.as_deref().and_then(slurm_size)?;
        let cpus = [on_node, per_task]
            .into_iter()
            .find_map(|v| v.as_deref().and_then(|t| t.trim().parse::<u64>().ok()).filter(|&n| n > 0))
            .unwrap_or(1);
        Some((per_cpu.saturating_mul(cpus), BudgetSource::SlurmPerCpu(cpus)))
    }
}

/// The limit files that apply to the process whose `/proc/self/cgroup` reads `membership`, with
/// the cgroup file system at `root`: for v2 (`0::/path`) `memory.max` of the cgroup and each
/// parent; for v1 (a line naming the `memory` controller) `memory.limit_in_bytes` likewise,
/// under `root/memory`. Inside a container the path may not exist under the mount (the mount
/// shows the container's own cgroup as its root), so the mount's root is always included.
pub fn cgroup_limit_files(root: &Path, membership: &str) -> Vec<PathBuf> {
    let mut files = Vec::new();
    for line in membership.lines() {
        let mut parts = line.splitn(3, ':');
        let (Some(id), Some(controllers), Some(path)) = (parts.next(), parts.next(), parts.next()) else { continue };
        let (base, file) = if id == "0" && controllers.is_empty() {
            (root.to_path_buf(), "memory.max")
        } else if controllers.split(',').any(|c| c == "memory") {
            (root.join("memory"), "memory.limit_in_bytes")
        } else {
            continue;
        };
        let mut dir = Path::new(path.trim_start_matches('/'));
        loop {
            let candidate = base.join(dir).join(file);
            if !files.contains(&candidate) {
                files.push(candidate);
            }
            match dir.parent() {
                Some(p) => dir = p,
                None => break,
            }
        }
    }
    files
}

/// A cgroup limit file's value, bytes (`None` for `max` or a value that means no limit).
pub fn cgroup_limit(text: &str) -> Option<u64> {
    let t = text.trim();
    if t == "max" {
        return None;
    }
    t.parse::<u64>().ok().filter(|&b| b > 0 && b < UNLIMITED)
}

/// A SLURM memory variable, bytes: megabytes when bare (SLURM's unit), else with its unit.
pub fn slurm_size(text: &str) -> Option<u64> {
    let t = text.trim();
    match t.parse::<u64>() {
        Ok(0) => None,
        Ok(mb) => mb.checked_mul(MIB),
        Err(_) => parse_size(t).ok(),
    }
}

/// The soft address-space limit in the text of `/proc/self/limits`, bytes (`None` if unlimited).
pub fn address_space_limit(text: &str) -> Option<u64> {
    let line = text.lines().find(|l| l.starts_with("Max address space"))?;
    let soft = line["Max address space".len()..].split_whitespace().next()?;
    soft.parse::<u64>().ok().filter(|&b| b < UNLIMITED)
}

/// `MemTotal` in the text of `/proc/meminfo`, bytes.
pub fn physical_memory(text: &str) -> Option<u64> {
    let line = text.lines().find(|l| l.starts_with("MemTotal:"))?;
    let kb: u64 = line["MemTotal:".len()..].split_whitespace().next()?.parse().ok()?;
    kb.checked_mul(1024)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::memory::GIB;

    const MEMINFO: &str = "MemTotal:       24578800 kB\nMemFree:        20000000 kB\n";
    const LIMITS: &str = "Limit                     Soft Limit           Hard Limit           Units     \n\
        Max cpu time              unlimited            unlimited            seconds   \n\
        Max address space         4294967296           unlimited            bytes     \n";

    #[test]
    fn cgroup_membership_names_the_limit_files_up_to_the_root() {
        let root = Path::new("/sys/fs/cgroup");
        let v2 = cgroup_limit_files(root, "0::/user.slice/job_42/step_0\n");
        assert_eq!(
            v2,
            ["user.slice/job_42/step_0", "user.slice/job_42", "user.slice", ""]
                .map(|d| root.join(d).join("memory.max"))
                .to_vec()
        );
        let v1 = cgroup_limit_files(root, "9:name=systemd:/\n4:memory:/slurm/uid_1/job_7\n3:cpuset:/\n0::/\n");
        assert_eq!(v1[0], root.join("memory/slurm/uid_1/job_7/memory.limit_in_bytes"));
        assert_eq!(v1[3], root.join("memory/memory.limit_in_bytes"));
        // The v2 line of a hybrid system adds the unified root.
        assert_eq!(v1.last(), Some(&root.join("memory.max")));
        let combined = cgroup_limit_files(root, "5:cpu,memory:/a\n");
        assert_eq!(combined, vec![root.join("memory/a/memory.limit_in_bytes"), root.join("memory/memory.limit_in_bytes")]);
        assert!(cgroup_limit_files(root, "garbage\n").is_empty());
    }

    #[test]
    fn cgroup_values_and_their_no_limit_spellings() {
        assert_eq!(cgroup_limit("8589934592\n"), Some(8 * GIB));
        assert_eq!(cgroup_limit("max\n"), None);
        assert_eq!(cgroup_limit("9223372036854771712\n"), None);
        assert_eq!(cgroup_limit("0"), None);
        assert_eq!(cgroup_limit("lots"), None);
    }

    #[test]
    fn slurm_sizes_are_megabytes_unless_a_unit_says() {
        assert_eq!(slurm_size("8000"), Some(8000 * MIB));
        assert_eq!(slurm_size("4G"), Some(4 * GIB));
        assert_eq!(slurm_size("0"), None);
        assert_eq!(slurm_size("x"), None);
    }

    #[test]
    fn address_space_and_physical_memory_are_read() {
        assert_eq!(address_space_limit(LIMITS), Some(4 * GIB));
        assert_eq!(address_space_limit(&LIMITS.replace("4294967296", "unlimited ")), None);
        assert_eq!(physical_memory(MEMINFO), Some(24578800 * 1024));
        assert_eq!(physical_memory("nothing"), None);
    }

    #[test]
    fn the_tightest_limit_wins_with_its_margin() {
        let machine = Limits { meminfo: Some(MEMINFO.into()), ..Limits::default() };
        let b = machine.budget(2).unwrap();
        assert_eq!(b.source, BudgetSource::PhysicalMemory);
        assert_eq!(b.bytes, b.limit - b.limit / 10);

        let cgroup = PathBuf::from("/sys/fs/cgroup/job/memory.max");
        let job = Limits {
            cgroup_files: vec![(cgroup.clone(), "17179869184\n".into()), (PathBuf::from("/sys/fs/cgroup/memory.max"), "max\n".into())],
            slurm: [Some("20000".into()), None, None, None],
            ..machine.clone()
        };
        let b = job.budget(2).unwrap();
        assert_eq!((b.limit, b.source.clone()), (16 * GIB, BudgetSource::Cgroup(cgroup)));
        assert!(b.to_string().contains("cgroup limit"), "{b}");

        // SLURM per CPU, times the CPUs on the node; the smaller limit wins over the cgroup's.
        let slurm = Limits { slurm: [None, Some("2000".into()), Some("4".into()), Some("2".into())], ..job.clone() };
        assert_eq!(slurm.budget(2).unwrap().source, BudgetSource::SlurmPerCpu(4));
        assert_eq!(slurm.budget(2).unwrap().limit, 8000 * MIB);
        let one_cpu = Limits { slurm: [None, Some("2000".into()), None, None], ..Limits::default() };
        assert_eq!(one_cpu.budget(1).unwrap().source, BudgetSource::SlurmPerCpu(1));

        // An address-space limit reserves the allocator arenas of every thread too.
        let ulimit = Limits { proc_limits: Some(LIMITS.into()), ..job };
        let b = ulimit.budget(3).unwrap();
        assert_eq!(b.source, BudgetSource::AddressSpace);
        assert_eq!(b.bytes, 4 * GIB - (4 * GIB / 10) - 4 * ARENA_RESERVE);
        // Small limits keep at least the minimum margin.
        let small = Limits { cgroup_files: vec![(PathBuf::from("m"), "1073741824".into())], ..Limits::default() };
        assert_eq!(small.budget(1).unwrap().bytes, GIB - MIN_MARGIN);

        assert_eq!(Limits::default().budget(1), None);
        assert_eq!(MemoryBudget::given(5 * GIB).to_string(), "5.00 GiB (as given)");
    }
}
