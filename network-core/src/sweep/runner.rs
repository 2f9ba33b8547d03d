//! Running a sweep's cases into a folder: every case, the unfinished ones
//! (resume), or one case alone (a job of a cluster's array); and merging
//! the finished cases back into a [`SweepSummary`].
//!
//! A case reads its own network (loaded, or generated with the realisation's
//! seed) and runs on its own, so its result never depends on which other
//! cases run, where, or in what order. Cases run in parallel a few at a time
//! (as many as there are worker threads), which bounds the memory.

use std::path::{Path, PathBuf};
use std::sync::Mutex;

use rayon::prelude::*;

use super::{Case, CaseResult, SweepStudy, SweepSummary, summarise_with};
use crate::io::result_set::{self, FolderState};
use crate::io::study::{StudyInputError, study_network};
use crate::io::sweep_store::{self, StoreError};
use crate::progress::{Progress, Silent};
use crate::run::run_study;

/// Why a sweep could not run or be merged.
#[non_exhaustive]
#[derive(Debug, thiserror::Error)]
pub enum SweepError {
    /// A case number outside the sweep.
    #[error("case {case}: the sweep has cases 0 to {}", n_cases.saturating_sub(1))]
    NoSuchCase {
        /// The case asked for.
        case: usize,
        /// Number of cases of the sweep.
        n_cases: usize,
    },
    /// A case's study or network could not be had.
    #[error("case {case}")]
    Input {
        /// The case.
        case: usize,
        /// The underlying error.
        source: StudyInputError,
    },
    /// Reading or writing the sweep folder failed.
    #[error(transparent)]
    Store(#[from] StoreError),
    /// The output folder holds files that are not a sweep of ours.
    #[error(
        "{} holds {n_entries} entries but no sweep of ours (neither sweep-cases.json nor a \
         sweep manifest): nothing was written; choose a new or empty folder",
        path.display()
    )]
    NotOurs {
        /// The folder.
        path: PathBuf,
        /// Entries in it.
        n_entries: usize,
    },
    /// Some cases failed; the others finished and were kept.
    #[error("{} case(s) failed; first: {}", failures.len(), failures.first().map_or("", String::as_str))]
    CasesFailed {
        /// One line per failed case.
        failures: Vec<String>,
    },
}

/// A sweep prepared in its folder: the case list written, the finished
/// cases found.
#[derive(Clone, Debug)]
pub struct SweepRun {
    study_path: PathBuf,
    out: PathBuf,
    cases: Vec<Case>,
    todo: Vec<usize>,
}

impl SweepRun {
    /// Prepares `out` for the cases of `sweep` (read from `study_path`,
    /// against which relative network paths resolve): writes the case list
    /// and finds the cases already finished there.
    pub fn prepare(
        study_path: &Path,
        sweep: &SweepStudy,
        out: &Path,
    ) -> Result<SweepRun, SweepError> {
        let cases = sweep.cases();
        let all: Vec<usize> = (0..cases.len()).collect();
        Self::prepare_cases(study_path, cases, &all, out)
    }

    /// Prepares `out` like [`SweepRun::prepare`] for a job that runs only
    /// the cases `selected` (ascending case numbers): only their result
    /// files are looked at, and [`SweepRun::todo`] holds the unfinished
    /// ones among them. A case number outside the sweep is refused before
    /// anything is written.
    ///
    /// Many jobs may prepare the same folder at once: the case list they
    /// write is the same text, written atomically (and not rewritten when
    /// the file already holds it).
    pub fn prepare_selection(
        study_path: &Path,
        sweep: &SweepStudy,
        out: &Path,
        selected: &[usize],
    ) -> Result<SweepRun, SweepError> {
        let cases = sweep.cases();
        if let Some(&case) = selected.iter().find(|&&k| k >= cases.len()) {
            return Err(SweepError::NoSuchCase {
                case,
                n_cases: cases.len(),
            });
        }
        Self::prepare_cases(study_path, cases, selected, out)
    }

    fn prepare_cases(
        study_path: &Path,
        cases: Vec<Case>,
        selected: &[usize],
        out: &Path,
    ) -> Result<SweepRun, SweepError> {
        check_folder(out)?;
        sweep_store::write_case_list(out, &cases)?;
        let todo = selected
            .iter()
            .copied()
            .filter(|&k| finished(out, &cases[k]).is_none())
            .collect();
        Ok(SweepRun {
            study_path: study_path.to_path_buf(),
            out: out.to_path_buf(),
            cases,
            todo,
        })
    }

    /// Every case of the sweep.
    pub fn cases(&self) -> &[Case] {
        &self.cases
    }

    /// Numbers of the cases not finished yet (among the selected ones, for
    /// [`SweepRun::prepare_selection`]).
    pub fn todo(&self) -> &[usize] {
        &self.todo
    }

    /// Runs case `k` alone (whether or not it had finished).
    pub fn run_one(&self, k: usize) -> Result<(), SweepError> {
        let case = self.cases.get(k).ok_or(SweepError::NoSuchCase {
            case: k,
            n_cases: self.cases.len(),
        })?;
        run_case(&self.study_path, &self.out, case)
    }

    /// Runs every unfinished case, in parallel, reporting one unit of
    /// `progress` per case. Failed cases are listed in the error; the
    /// others are kept.
    pub fn run_unfinished(&self, progress: &dyn Progress) -> Result<(), SweepError> {
        self.run_cases(&self.todo, progress)
    }

    fn run_cases(&self, todo: &[usize], progress: &dyn Progress) -> Result<(), SweepError> {
        progress.start("sweep", todo.len() as u64);
        let threads = rayon::current_num_threads().max(1);
        let failures = Mutex::new(Vec::new());
        for chunk in todo.chunks(threads) {
            chunk.par_iter().for_each(|&k| {
                if let Err(e) = run_case(&self.study_path, &self.out, &self.cases[k]) {
                    let mut chain = e.to_string();
                    let mut src = std::error::Error::source(&e);
                    while let Some(s) = src {
                        chain += &format!(": {s}");
                        src = s.source();
                    }
                    failures.lock().expect("lock").push(chain);
                }
                progress.advance(1);
            });
        }
        progress.finish();
        let mut failures = failures.into_inner().expect("lock");
        failures.sort();
        if failures.is_empty() {
            Ok(())
        } else {
            Err(SweepError::CasesFailed { failures })
        }
    }
}

/// The finished result of `case` in `out`, if its file exists, parses and
/// belongs to the same study (a changed study never reuses stale results).
fn finished(out: &Path, case: &Case) -> Option<CaseResult> {
    let r: CaseResult = sweep_store::read_case(out, case.index)?;
    (r.case.study_hash == case.study_hash).then_some(r)
}

/// Runs one case into `out/cases/`.
pub fn run_case(study_path: &Path, out: &Path, case: &Case) -> Result<(), SweepError> {
    let study = case.study();
    let input = |source| SweepError::Input {
        case: case.index,
        source,
    };
    let net = study_network(study_path, &study, case.realisation).map_err(input)?;
    let mut r = run_study(&net.network, &study, &Silent);
    r.network.hash = net.hash;
    let res = CaseResult::from_run(case.clone(), &r);
    sweep_store::write_case(out, case.index, &res)?;
    Ok(())
}

/// The finished cases of a sweep folder and their statistics.
#[derive(Clone, Debug)]
pub struct Collected {
    /// Every case of the sweep.
    pub cases: Vec<Case>,
    /// Results of the finished cases, in case order.
    pub results: Vec<CaseResult>,
    /// Numbers of the cases not finished.
    pub missing: Vec<usize>,
    /// Statistics of the finished cases.
    pub summary: SweepSummary,
}

/// Merges the finished cases of the sweep folder `out`.
pub fn collect(out: &Path) -> Result<Collected, SweepError> {
    let cases = sweep_store::read_case_list(out)?;
    let mut results = Vec::new();
    let mut missing = Vec::new();
    for c in &cases {
        match finished(out, c) {
            Some(r) => results.push(r),
            None => missing.push(c.index),
        }
    }
    // The fit range of the case list (the current study), not of the
    // result files, which a changed range does not invalidate.
    let range = cases.first().and_then(|c| c.land_fit_sni_range);
    let summary = summarise_with(cases.len(), &results, range);
    Ok(Collected {
        cases,
        results,
        missing,
        summary,
    })
}

/// Refuses a folder of other files before anything is written into it: a
/// sweep folder is new, empty, or holds our case list or a sweep manifest
/// (a run's result set is not a sweep's).
fn check_folder(out: &Path) -> Result<(), SweepError> {
    let not_ours = |n_entries| SweepError::NotOurs {
        path: out.to_path_buf(),
        n_entries,
    };
    let n_entries = || std::fs::read_dir(out).map_or(0, |d| d.count());
    match result_set::folder_state(out) {
        Ok(FolderState::Foreign { n_entries }) if !sweep_store::case_list_path(out).is_file() => {
            Err(not_ours(n_entries))
        }
        Ok(FolderState::Ours(m)) if m.kind != "sweep" => Err(not_ours(n_entries())),
        // Unreadable folders are reported by the writes that follow.
        _ => Ok(()),
    }
}
