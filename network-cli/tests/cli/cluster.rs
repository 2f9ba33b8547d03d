//! Sweeps split over jobs: case lists, shards, the case count, `collect`'s
//! missing-case report and the job scripts of `batch-script`, each checked
//! against a plain sweep of the same study byte for byte.

use std::collections::BTreeMap;
use std::process::Command;

use super::*;

/// Every file under `dir` (relative path → bytes), leaving out the
/// top-level folders named in `skip`.
fn files(dir: &Path, skip: &[&str]) -> BTreeMap<String, Vec<u8>> {
    walk(dir)
        .into_iter()
        .map(|p| {
            let rel = p.strip_prefix(dir).unwrap().to_string_lossy().to_string();
            (rel, p)
        })
        .filter(|(rel, _)| !skip.iter().any(|s| rel.starts_with(&format!("{s}/"))))
        .map(|(rel, p)| (rel, std::fs::read(p).unwrap()))
        .collect()
}

/// Asserts that two sweep folders hold the same files with the same bytes.
fn same_files(a: &Path, b: &Path, skip: &[&str]) {
    let (fa, fb) = (files(a, skip), files(b, skip));
    assert_eq!(
        fa.keys().collect::<Vec<_>>(),
        fb.keys().collect::<Vec<_>>(),
        "different files in {} and {}",
        a.display(),
        b.display()
    );
    for (name, bytes) in &fa {
        assert!(bytes == &fb[name], "{name} differs");
    }
    assert!(fa.contains_key("summary.json") && fa.contains_key("report.html"));
}

fn case_files(out: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(out.join("cases"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .collect();
    v.sort();
    v
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).to_string()
}

#[test]
fn count_cases_prints_the_number_of_cases_alone() {
    let d = scratch("count");
    let st = write_study(&d, SWEEP);
    let o = ok(&["sweep", s(&st), "-o", s(&d.join("out")), "--count-cases"]);
    // 3 initial saturations × 2 realisations.
    assert_eq!(String::from_utf8_lossy(&o.stdout), "6\n");
    let three = SWEEP.replace("realisations = 2", "realisations = 3");
    let st3 = write_study(&d, &three);
    let o = ok(&["sweep", s(&st3), "-o", s(&d.join("out")), "--count-cases"]);
    assert_eq!(String::from_utf8_lossy(&o.stdout), "9\n");
    assert!(!d.join("out").exists(), "counting wrote output");
}

#[test]
fn list_cases_with_a_shard_lists_only_its_contiguous_cases() {
    let d = scratch("list-shard");
    let st = write_study(&d, SWEEP);
    let numbers = |flag: &str, value: &str| -> Vec<usize> {
        let o = ok(&[
            "sweep",
            s(&st),
            "-o",
            s(&d.join("o")),
            "--list-cases",
            flag,
            value,
        ]);
        String::from_utf8_lossy(&o.stdout)
            .lines()
            .map(|l| l.split_whitespace().next().unwrap().parse().unwrap())
            .collect()
    };
    // 6 cases in 4 shards: ⌊6i/4⌋ gives 0, 1, 3, 4, 6.
    assert_eq!(numbers("--shard", "0/4"), vec![0]);
    assert_eq!(numbers("--shard", "1/4"), vec![1, 2]);
    assert_eq!(numbers("--shard", "2/4"), vec![3]);
    assert_eq!(numbers("--shard", "3/4"), vec![4, 5]);
    assert_eq!(numbers("--case", "5,0-1"), vec![0, 1, 5]);
}

#[test]
fn shards_run_at_once_into_one_folder_then_collect_equal_a_plain_sweep_byte_for_byte() {
    let d = scratch("shards");
    let st = write_study(&d, SWEEP);
    let plain = d.join("plain");
    ok(&["--quiet", "sweep", s(&st), "-o", s(&plain)]);

    // Eight jobs start at once on a fresh folder (two of the eight shards
    // of six cases are empty): they all prepare it concurrently.
    let sharded = d.join("sharded");
    let jobs: Vec<_> = (0..8)
        .map(|i| {
            Command::new(env!("CARGO_BIN_EXE_ganglion"))
                .args([
                    "--quiet",
                    "--threads",
                    "1",
                    "sweep",
                    s(&st),
                    "-o",
                    s(&sharded),
                ])
                .args(["--shard", &format!("{i}/8")])
                .current_dir(root())
                .output()
                .expect("ganglion runs")
        })
        .collect();
    for (i, o) in jobs.iter().enumerate() {
        assert!(o.status.success(), "shard {i}/8: {}", stderr(o));
    }
    let names: Vec<String> = (0..6).map(|k| format!("case-{k:05}.json")).collect();
    assert_eq!(case_files(&sharded), names, "every case exactly once");
    ok(&["--quiet", "collect", s(&sharded)]);
    same_files(&plain, &sharded, &[]);
    no_temp_files(&sharded);

    // The same with case lists, in an order of their own.
    let listed = d.join("listed");
    for list in ["4-5", "0,2", "3,1"] {
        ok(&["--quiet", "sweep", s(&st), "-o", s(&listed), "--case", list]);
    }
    ok(&["--quiet", "collect", s(&listed)]);
    same_files(&plain, &listed, &[]);
}

#[test]
fn a_case_list_runs_only_its_cases_and_keeps_finished_ones() {
    let d = scratch("case-list");
    let st = write_study(&d, SWEEP);
    let out = d.join("out");
    let o = ok(&["sweep", s(&st), "-o", s(&out), "--case", "1-2,4"]);
    assert!(stderr(&o).contains("cases 1-2,4 of 6: 0 already finished, 3 to run"));
    assert_eq!(
        case_files(&out),
        vec!["case-00001.json", "case-00002.json", "case-00004.json"]
    );
    let before = std::fs::metadata(out.join("cases/case-00002.json"))
        .unwrap()
        .modified()
        .unwrap();
    let o = ok(&["sweep", s(&st), "-o", s(&out), "--case", "2-3"]);
    assert!(
        stderr(&o).contains("cases 2-3 of 6: 1 already finished, 1 to run"),
        "{}",
        stderr(&o)
    );
    let after = std::fs::metadata(out.join("cases/case-00002.json"))
        .unwrap()
        .modified()
        .unwrap();
    assert_eq!(before, after, "a finished case was recomputed");
}

#[test]
fn collect_lists_missing_cases_by_range_and_writes_nothing() {
    let d = scratch("missing");
    let st = write_study(&d, SWEEP);
    let out = d.join("out");
    ok(&["--quiet", "sweep", s(&st), "-o", s(&out), "--case", "0-1,3"]);
    let o = ganglion(&["--quiet", "collect", s(&out)]);
    assert_eq!(o.status.code(), Some(1));
    let e = stderr(&o);
    assert!(e.contains("3 of 6 cases missing"), "{e}");
    assert!(e.contains(": 2,4-5 "), "{e}");
    assert!(e.contains("--case 2,4-5"), "{e}");
    assert!(!out.join("summary.json").exists());
    assert!(!out.join("report.html").exists());
    // The list it prints runs the missing cases; then collect succeeds.
    ok(&["--quiet", "sweep", s(&st), "-o", s(&out), "--case", "2,4-5"]);
    ok(&["--quiet", "collect", s(&out)]);
    assert!(out.join("summary.json").exists());
    // A partial merge on request, with the missing cases in a warning.
    let part = d.join("part");
    ok(&["--quiet", "sweep", s(&st), "-o", s(&part), "--shard", "0/2"]);
    let o = ok(&["--quiet", "collect", s(&part), "--allow-missing"]);
    assert!(stderr(&o).contains("3 of 6 cases missing, merged without them: 3-5"));
    let summary: serde_json::Value =
        serde_json::from_slice(&std::fs::read(part.join("summary.json")).unwrap()).unwrap();
    assert_eq!(summary["cases_total"], 6);
    assert_eq!(summary["cases_done"], 3);
}

#[test]
fn bad_case_lists_and_shards_are_refused_before_anything_is_written() {
    let d = scratch("bad-selection");
    let st = write_study(&d, SWEEP);
    let out = d.join("out");
    for (flag, value, says) in [
        (
            "--case",
            "5-2",
            "--case '5-2': the range 5-2 ends before it starts",
        ),
        (
            "--case",
            "6",
            "--case '6': case 6 does not exist; the sweep has cases 0 to 5",
        ),
        ("--case", "1,x", "--case '1,x' is not a case list"),
        ("--case", "", "--case '' is not a case list"),
        (
            "--shard",
            "0/0",
            "--shard '0/0' is not a shard: N must be at least 1",
        ),
        (
            "--shard",
            "4/4",
            "--shard '4/4' is not a shard: I must be below N",
        ),
        ("--shard", "1-4", "--shard '1-4' is not a shard"),
    ] {
        let o = ganglion(&["sweep", s(&st), "-o", s(&out), flag, value]);
        assert_eq!(o.status.code(), Some(1), "{flag} {value}");
        assert!(stderr(&o).contains(says), "{flag} {value}: {}", stderr(&o));
        assert!(!out.exists(), "{flag} {value} wrote {}", out.display());
    }
    // Both at once is a usage error.
    let o = ganglion(&[
        "sweep",
        s(&st),
        "-o",
        s(&out),
        "--case",
        "1",
        "--shard",
        "0/2",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(!out.exists());
}

/// A stand-in for `sbatch --parsable` that logs its arguments and prints
/// job ids 101, 102, …
fn fake_sbatch(dir: &Path) -> PathBuf {
    let bin = dir.join("fake-bin");
    std::fs::create_dir_all(&bin).unwrap();
    let log = dir.join("sbatch.log");
    let script = format!(
        "#!/bin/sh\necho \"$*\" >> '{}'\necho $((100 + $(wc -l < '{}')))\n",
        log.display(),
        log.display()
    );
    let path = bin.join("sbatch");
    std::fs::write(&path, script).unwrap();
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o755)).unwrap();
    bin
}

#[test]
fn batch_script_groups_cases_under_the_array_limit_and_its_jobs_equal_a_plain_sweep() {
    let d = scratch("batch");
    let st = write_study(&d, SWEEP);
    let plain = d.join("plain");
    ok(&["--quiet", "sweep", s(&st), "-o", s(&plain)]);

    let out = d.join("cluster");
    let o = ok(&[
        "batch-script",
        s(&st),
        "-o",
        s(&out),
        "--cases-per-job",
        "1",
        "--max-array-size",
        "4",
        "--max-running",
        "2",
        "--partition",
        "short",
        "--time",
        "00:30:00",
        "--mem",
        "2G",
        "--cpus-per-task",
        "2",
        "--sbatch-arg=--account=geo",
    ]);
    let printed = String::from_utf8_lossy(&o.stdout);
    assert!(
        printed.contains("6 cases in 4 array task(s) of at most 2 case(s) each"),
        "{printed}"
    );
    // The case list is written before any job starts.
    assert!(out.join("sweep-cases.json").exists());
    let array = std::fs::read_to_string(out.join("batch/sweep-array.sbatch")).unwrap();
    for line in [
        "#SBATCH --array=0-3%2",
        "#SBATCH --cpus-per-task=2",
        "#SBATCH --partition=short",
        "#SBATCH --time=00:30:00",
        "#SBATCH --mem=2G",
        "#SBATCH --account=geo",
    ] {
        assert!(array.lines().any(|l| l == line), "no '{line}' in:\n{array}");
    }
    assert!(array.contains("/4\"\n"), "{array}");
    let merge = std::fs::read_to_string(out.join("batch/collect.sbatch")).unwrap();
    assert!(merge.contains(" collect '"), "{merge}");
    assert!(merge.lines().any(|l| l == "#SBATCH --partition=short"));
    assert!(!merge.contains("--array"));

    // Run the written scripts as the scheduler would: each array task with
    // its task id, then the merge job.
    for task in 0..4 {
        let o = Command::new("bash")
            .arg(out.join("batch/sweep-array.sbatch"))
            .env("SLURM_ARRAY_TASK_ID", task.to_string())
            .env("SLURM_CPUS_PER_TASK", "2")
            .output()
            .unwrap();
        assert!(o.status.success(), "task {task}: {}", stderr(&o));
    }
    let o = Command::new("bash")
        .arg(out.join("batch/collect.sbatch"))
        .output()
        .unwrap();
    assert!(o.status.success(), "merge: {}", stderr(&o));
    same_files(&plain, &out, &["batch"]);

    // submit.sh: the array first, then the merge with afterok on its id.
    let bin = fake_sbatch(&d);
    let path = format!("{}:{}", bin.display(), std::env::var("PATH").unwrap());
    let o = Command::new("sh")
        .arg(out.join("batch/submit.sh"))
        .env("PATH", path)
        .output()
        .unwrap();
    assert!(o.status.success(), "submit.sh: {}", stderr(&o));
    let calls = std::fs::read_to_string(d.join("sbatch.log")).unwrap();
    let calls: Vec<&str> = calls.lines().collect();
    assert_eq!(calls.len(), 2, "{calls:?}");
    assert!(calls[0].starts_with("--parsable ") && calls[0].ends_with("sweep-array.sbatch"));
    assert!(
        calls[1].contains("--dependency=afterok:101 "),
        "{}",
        calls[1]
    );
    assert!(calls[1].ends_with("collect.sbatch"));
    assert!(String::from_utf8_lossy(&o.stdout).contains("array job 101 (4 tasks), merge job 102"));
}

#[test]
fn batch_script_with_the_default_limit_runs_one_case_per_task() {
    let d = scratch("batch-default");
    let st = write_study(&d, SWEEP);
    let out = d.join("out");
    ok(&[
        "batch-script",
        s(&st),
        "-o",
        s(&out),
        "--cases-per-job",
        "4",
    ]);
    let array = std::fs::read_to_string(out.join("batch/sweep-array.sbatch")).unwrap();
    // 6 cases, 4 per job: 2 tasks of 3 (the balanced split).
    assert!(array.lines().any(|l| l == "#SBATCH --array=0-1"), "{array}");
    assert!(!array.contains("--partition") && !array.contains("--mem"));
    ok(&["batch-script", s(&st), "-o", s(&out)]);
    let array = std::fs::read_to_string(out.join("batch/sweep-array.sbatch")).unwrap();
    assert!(array.lines().any(|l| l == "#SBATCH --array=0-5"), "{array}");
}

#[test]
fn bad_batch_script_flags_are_refused_before_anything_is_written() {
    let d = scratch("batch-bad");
    let st = write_study(&d, SWEEP);
    let out = d.join("out");
    for (args, says) in [
        (vec!["--cases-per-job", "0"], "--cases-per-job 0"),
        (vec!["--max-array-size", "0"], "--max-array-size 0"),
        (vec!["--max-running", "0"], "--max-running 0"),
        (vec!["--cpus-per-task", "0"], "--cpus-per-task 0"),
        (vec!["--time", "one hour"], "--time 'one hour'"),
        (vec!["--time", "1:"], "--time '1:'"),
        (vec!["--mem", "4X"], "--mem '4X'"),
        (vec!["--partition", "a b"], "--partition 'a b'"),
        (vec!["--sbatch-arg=--qos=a b"], "--sbatch-arg '--qos=a b'"),
        (
            vec!["--sbatch-arg=--array=0-9"],
            "--sbatch-arg '--array=0-9'",
        ),
        (
            vec!["--ganglion", "/no/such/ganglion"],
            "--ganglion '/no/such/ganglion'",
        ),
    ] {
        let mut a = vec!["batch-script", s(&st), "-o", s(&out)];
        a.extend(&args);
        let o = ganglion(&a);
        assert_eq!(o.status.code(), Some(1), "{args:?}");
        assert!(stderr(&o).contains(says), "{args:?}: {}", stderr(&o));
        assert!(!out.exists(), "{args:?} wrote {}", out.display());
    }
}
