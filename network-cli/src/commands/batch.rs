//! `ganglion batch-script`: the Slurm job scripts of a sweep (a job array
//! of shards and a merge job that depends on it).

use std::path::{Path, PathBuf};

use anyhow::{Context, Result, bail};
use network_core::io::atomic::write_atomic;
use network_core::sweep::{ArrayPlan, SweepRun};

use crate::progress::Bars;

/// Write the Slurm job scripts of a sweep: a job array whose task I runs
/// `ganglion sweep STUDY -o OUT --shard I/N`, and a merge job that runs
/// `ganglion collect OUT` once every task has succeeded.
///
/// The sweep's cases are grouped into N array tasks of at most
/// --cases-per-job contiguous cases; when that needs more tasks than
/// --max-array-size (the scheduler's MaxArraySize, 1001 by default, allows
/// task numbers up to 1000), the groups grow so that N stays within it.
/// The scheduler starts jobs seconds apart, so group short cases: one job
/// per case suits cases of minutes (10⁵–10⁶ pores), tens of cases per job
/// suit cases of a second or less.
///
/// Writes, in --scripts (default OUT/batch): sweep-array.sbatch,
/// collect.sbatch, submit.sh (the two `sbatch --parsable` calls, the merge
/// with --dependency=afterok on the array) and logs/; also writes the
/// sweep's case list into OUT, so the array's jobs find it. Paths in the
/// scripts are absolute. Submit with `sh OUT/batch/submit.sh`. If a task
/// fails, the merge job is cancelled; `ganglion collect OUT` lists the
/// missing cases, and submitting again reruns only those (finished cases
/// are kept).
///
/// Examples:
///   ganglion batch-script studies/kestrel-trapping.toml -o /scratch/trapping
///   ganglion batch-script studies/kestrel-trapping.toml -o /scratch/trapping \
///       --cases-per-job 8 --partition short --time 00:30:00 --mem 2G
#[derive(clap::Args, Debug)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// Study file with a [sweep] table.
    pub study: PathBuf,
    /// The sweep's output folder (on a file system every node sees).
    #[arg(short, long, value_name = "OUT")]
    pub output: PathBuf,
    /// Cases each array task runs at most (unless --max-array-size forces
    /// more).
    #[arg(long, value_name = "K", default_value_t = 1)]
    pub cases_per_job: usize,
    /// Most tasks in the array (the scheduler's limit).
    #[arg(long, value_name = "N", default_value_t = 1000)]
    pub max_array_size: usize,
    /// Most tasks running at once (`--array=0-N%M`; default: no limit).
    #[arg(long, value_name = "M")]
    pub max_running: Option<usize>,
    /// Partition (queue) of both jobs (default: the cluster's default).
    #[arg(long, value_name = "NAME")]
    pub partition: Option<String>,
    /// Time limit of each job, in the scheduler's format (MM, HH:MM:SS,
    /// D-HH:MM:SS).
    #[arg(long, value_name = "TIME", default_value = "01:00:00")]
    pub time: String,
    /// Memory of each job, e.g. 4G (default: the cluster's default).
    #[arg(long, value_name = "SIZE")]
    pub mem: Option<String>,
    /// Cores of each array task; the task's cases run in parallel on them.
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub cpus_per_task: usize,
    /// Job name (the merge job gets "-collect" appended).
    #[arg(long, value_name = "NAME", default_value = "ganglion-sweep")]
    pub job_name: String,
    /// Any other sbatch option for both jobs, e.g. --sbatch-arg=--account=geo
    /// (repeatable).
    #[arg(long, value_name = "OPTION", allow_hyphen_values = true)]
    pub sbatch_arg: Vec<String>,
    /// The ganglion binary the jobs run (default: this one).
    #[arg(long, value_name = "PATH")]
    pub ganglion: Option<PathBuf>,
    /// Folder of the scripts and logs (default: OUT/batch).
    #[arg(long, value_name = "DIR")]
    pub scripts: Option<PathBuf>,
}

/// A value that goes into a `#SBATCH` line: no white space, quotes or
/// control characters, and only the characters `allowed` accepts.
fn check_word(flag: &str, value: &str, allowed: impl Fn(char) -> bool, hint: &str) -> Result<()> {
    if value.is_empty() || !value.chars().all(allowed) {
        bail!("{flag} '{value}': {hint}");
    }
    Ok(())
}

/// Checks every flag; nothing is written before.
fn check_flags(args: &Args) -> Result<()> {
    if args.cases_per_job == 0 {
        bail!("--cases-per-job 0: each job runs at least one case");
    }
    if args.max_array_size == 0 {
        bail!("--max-array-size 0: the array needs at least one task");
    }
    if args.max_running == Some(0) {
        bail!("--max-running 0: at least one task must run");
    }
    if args.cpus_per_task == 0 {
        bail!("--cpus-per-task 0: a task needs at least one core");
    }
    let name = |c: char| c.is_ascii_alphanumeric() || "_.-".contains(c);
    check_word(
        "--job-name",
        &args.job_name,
        name,
        "use letters, digits, '_', '.' and '-'",
    )?;
    if let Some(p) = &args.partition {
        check_word(
            "--partition",
            p,
            |c| name(c) || c == ',',
            "use letters, digits, '_', '.', '-' (and ',' between partitions)",
        )?;
    }
    let time_ok = args.time.starts_with(|c: char| c.is_ascii_digit())
        && args.time.split(['-', ':']).count() <= 4
        && args.time.split(['-', ':']).all(|p| !p.is_empty())
        && args.time.matches('-').count() <= 1;
    check_word(
        "--time",
        &args.time,
        |c| c.is_ascii_digit() || c == ':' || c == '-',
        "write minutes, HH:MM:SS or D-HH:MM:SS",
    )?;
    if !time_ok {
        bail!(
            "--time '{}': write minutes, HH:MM:SS or D-HH:MM:SS",
            args.time
        );
    }
    if let Some(m) = &args.mem {
        let digits = m.trim_end_matches(['K', 'M', 'G', 'T']);
        let ok = !digits.is_empty()
            && digits.chars().all(|c| c.is_ascii_digit())
            && m.len() - digits.len() <= 1;
        if !ok {
            bail!("--mem '{m}': write a size such as 4000M or 4G");
        }
    }
    for a in &args.sbatch_arg {
        let ok = a.starts_with("--") && a.len() > 2 && !a.chars().any(char::is_whitespace);
        let ok = ok && !a.chars().any(|c| c.is_control() || "'\"\\`$".contains(c));
        if !ok {
            bail!(
                "--sbatch-arg '{a}': give one sbatch option as --name=value, \
                 without spaces, quotes or '$'"
            );
        }
        if a.starts_with("--array") || a.starts_with("--dependency") {
            bail!("--sbatch-arg '{a}': the array and the dependency are set by batch-script");
        }
    }
    Ok(())
}

/// `path` in single quotes for a POSIX shell.
fn quote(path: &Path) -> String {
    format!("'{}'", path.display().to_string().replace('\'', r"'\''"))
}

/// A path that goes into a `#SBATCH` line unquoted.
fn check_directive_path(flag: &str, path: &Path) -> Result<()> {
    let text = path.display().to_string();
    if text
        .chars()
        .any(|c| c.is_whitespace() || c.is_control() || "%'\"\\".contains(c))
    {
        bail!(
            "{flag} '{text}': the scheduler's log path cannot hold spaces, quotes, \
             backslashes or '%'; choose another folder"
        );
    }
    Ok(())
}

pub fn run(args: &Args, progress: &Bars) -> Result<()> {
    check_flags(args)?;
    let sweep = super::sweep::read_sweep(&args.study)?;
    let n_cases = sweep.cases().len();
    let plan = ArrayPlan::new(n_cases, args.cases_per_job, args.max_array_size)?;
    let ganglion = match &args.ganglion {
        Some(p) => p.clone(),
        None => std::env::current_exe().context("cannot find this program's path")?,
    };
    let ganglion = std::fs::canonicalize(&ganglion)
        .with_context(|| format!("--ganglion '{}': no such program", ganglion.display()))?;
    if !ganglion.is_file() {
        bail!("--ganglion '{}': not a program file", ganglion.display());
    }
    let study = std::fs::canonicalize(&args.study)
        .with_context(|| format!("cannot resolve {}", args.study.display()))?;
    let absolute = |p: &Path| -> Result<PathBuf> {
        Ok(if p.is_absolute() {
            p.to_path_buf()
        } else {
            std::env::current_dir()
                .context("cannot read the current folder")?
                .join(p)
        })
    };
    let out = absolute(&args.output)?;
    let scripts = match &args.scripts {
        Some(d) => absolute(d)?,
        None => out.join("batch"),
    };
    let logs = scripts.join("logs");
    check_directive_path(
        if args.scripts.is_some() {
            "--scripts"
        } else {
            "-o"
        },
        &logs,
    )?;

    // Written once here, before any job starts (the jobs then find the
    // same case list and leave it alone).
    SweepRun::prepare(&args.study, &sweep, &out)
        .with_context(|| format!("cannot prepare {}", out.display()))?;
    let out =
        std::fs::canonicalize(&out).with_context(|| format!("cannot resolve {}", out.display()))?;
    std::fs::create_dir_all(&logs).with_context(|| format!("cannot create {}", logs.display()))?;

    let array = array_script(args, &plan, &ganglion, &study, &out, &logs);
    let merge = collect_script(args, &ganglion, &out, &logs);
    let submit = submit_script(&plan, &out);
    let files = [
        ("sweep-array.sbatch", array),
        ("collect.sbatch", merge),
        ("submit.sh", submit),
    ];
    for (name, text) in &files {
        let path = scripts.join(name);
        write_atomic(&path, text.as_bytes())
            .with_context(|| format!("cannot write {}", path.display()))?;
        set_executable(&path)?;
    }
    println!(
        "{n_cases} cases in {} array task(s) of at most {} case(s) each",
        plan.n_jobs, plan.max_cases_per_job
    );
    println!("submit: sh {}", quote(&scripts.join("submit.sh")));
    println!("  which runs: sbatch --parsable sweep-array.sbatch");
    println!(
        "             sbatch --parsable --dependency=afterok:ARRAY_ID --kill-on-invalid-dep=yes collect.sbatch"
    );
    progress.note(&format!("scripts in {}", scripts.display()));
    Ok(())
}

#[cfg(unix)]
fn set_executable(path: &Path) -> Result<()> {
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o755))
        .with_context(|| format!("cannot make {} executable", path.display()))
}

#[cfg(not(unix))]
fn set_executable(_path: &Path) -> Result<()> {
    Ok(())
}

/// The `#SBATCH` lines both jobs share.
fn common_directives(args: &Args) -> String {
    let mut s = format!("#SBATCH --time={}\n", args.time);
    if let Some(p) = &args.partition {
        s += &format!("#SBATCH --partition={p}\n");
    }
    if let Some(m) = &args.mem {
        s += &format!("#SBATCH --mem={m}\n");
    }
    for a in &args.sbatch_arg {
        s += &format!("#SBATCH {a}\n");
    }
    s
}

fn array_script(
    args: &Args,
    plan: &ArrayPlan,
    ganglion: &Path,
    study: &Path,
    out: &Path,
    logs: &Path,
) -> String {
    let throttle = args
        .max_running
        .map(|m| format!("%{m}"))
        .unwrap_or_default();
    format!(
        "#!/bin/bash\n\
         # Job array of a Ganglion sweep, written by `ganglion batch-script`.\n\
         # {n} cases in {jobs} task(s); task I runs shard I/{jobs}: at most {per}\n\
         # contiguous cases, in parallel on the task's cores. Submit with\n\
         # submit.sh beside this file (it also queues the merge job).\n\
         #SBATCH --job-name={name}\n\
         #SBATCH --array=0-{last}{throttle}\n\
         #SBATCH --cpus-per-task={cpus}\n\
         {common}\
         #SBATCH --output={logs}/sweep-%A_%a.out\n\
         set -eu\n\
         exec {bin} --quiet --threads \"${{SLURM_CPUS_PER_TASK:-1}}\" sweep {study} -o {out} \\\n\
         \x20 --shard \"${{SLURM_ARRAY_TASK_ID:?run this script as a job-array task}}/{jobs}\"\n",
        n = plan.n_cases,
        jobs = plan.n_jobs,
        per = plan.max_cases_per_job,
        name = args.job_name,
        last = plan.n_jobs - 1,
        cpus = args.cpus_per_task,
        common = common_directives(args),
        logs = logs.display(),
        bin = quote(ganglion),
        study = quote(study),
        out = quote(out),
    )
}

fn collect_script(args: &Args, ganglion: &Path, out: &Path, logs: &Path) -> String {
    format!(
        "#!/bin/bash\n\
         # Merge job of a Ganglion sweep, written by `ganglion batch-script`:\n\
         # runs after every task of the array succeeded (submit.sh sets the\n\
         # dependency) and writes the sweep's summary, tables and report.\n\
         #SBATCH --job-name={name}-collect\n\
         #SBATCH --cpus-per-task=1\n\
         {common}\
         #SBATCH --output={logs}/collect-%j.out\n\
         set -eu\n\
         exec {bin} --quiet collect {out}\n",
        name = args.job_name,
        common = common_directives(args),
        logs = logs.display(),
        bin = quote(ganglion),
        out = quote(out),
    )
}

fn submit_script(plan: &ArrayPlan, out: &Path) -> String {
    format!(
        "#!/bin/sh\n\
         # Queues the job array of a Ganglion sweep, then its merge job, which\n\
         # starts once every array task has succeeded (and is cancelled if one\n\
         # fails: `ganglion collect` then lists the missing cases). Written by\n\
         # `ganglion batch-script`.\n\
         set -eu\n\
         here=$(cd \"$(dirname \"$0\")\" && pwd)\n\
         array=$(sbatch --parsable \"$here/sweep-array.sbatch\")\n\
         array=${{array%%;*}}\n\
         merge=$(sbatch --parsable --dependency=\"afterok:$array\" --kill-on-invalid-dep=yes \"$here/collect.sbatch\")\n\
         merge=${{merge%%;*}}\n\
         echo \"array job $array ({jobs} tasks), merge job $merge\"\n\
         echo \"results: \"{out}\n",
        jobs = plan.n_jobs,
        out = quote(out),
    )
}
