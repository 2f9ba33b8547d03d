//! Which cases one job runs: case lists (`3,5,7-9`), shards (`I/N`) and the
//! grouping of a sweep into the tasks of a job array.
//!
//! A shard `I/N` is the `I`-th of `N` groups of contiguous cases whose sizes
//! differ by at most one: shard `i` holds cases
//! `⌊i·n/N⌋ .. ⌊(i+1)·n/N⌋` of a sweep of `n` cases, so the `N` shards hold
//! every case exactly once, in order, whatever `n` and `N` are (a shard is
//! empty when `N > n`). The split depends only on `n`, `N` and `I`.
//!
//! ```
//! use network_core::sweep::{CaseList, Shard, compact_ranges};
//!
//! let list = CaseList::parse("3,5,7-9").unwrap();
//! assert_eq!(list.cases(10).unwrap(), vec![3, 5, 7, 8, 9]);
//! let shard = Shard::parse("1/3").unwrap();
//! assert_eq!(shard.cases(10), 3..6);
//! assert_eq!(compact_ranges(&[4, 5, 6, 7, 12]), "4-7,12");
//! ```

use std::ops::Range;

/// Why a case list, a shard or an array plan was refused. The messages name
/// the value; the caller adds the flag.
#[non_exhaustive]
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum SelectionError {
    /// The text is not a list of case numbers and ranges.
    #[error("'{text}' is not a case list: {reason} (write e.g. 3, 2-5 or 0,4,7-9)")]
    BadList {
        /// The text given.
        text: String,
        /// What is wrong with it.
        reason: String,
    },
    /// A range whose end comes before its start.
    #[error("'{text}': the range {start}-{end} ends before it starts")]
    Reversed {
        /// The text given.
        text: String,
        /// Start of the range.
        start: usize,
        /// End of the range.
        end: usize,
    },
    /// A case number outside the sweep.
    #[error("'{text}': case {case} does not exist; the sweep has cases 0 to {}", n_cases.saturating_sub(1))]
    OutOfRange {
        /// The text given.
        text: String,
        /// The first case outside the sweep.
        case: usize,
        /// Number of cases of the sweep.
        n_cases: usize,
    },
    /// The text is not a shard `I/N` with `0 ≤ I < N`.
    #[error("'{text}' is not a shard: {reason} (write I/N with 0 <= I < N, e.g. 0/8)")]
    BadShard {
        /// The text given.
        text: String,
        /// What is wrong with it.
        reason: String,
    },
    /// A job-array plan with a zero size or limit.
    #[error("{what} must be at least 1, not 0")]
    Zero {
        /// Which number was zero.
        what: &'static str,
    },
}

/// A list of case numbers and inclusive ranges, as written on the command
/// line (`3`, `2-5`, `0,4,7-9`), not yet checked against a sweep.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CaseList {
    text: String,
    ranges: Vec<(usize, usize)>,
}

impl CaseList {
    /// Parses `text`: comma-separated case numbers `K` and inclusive ranges
    /// `A-B` with `A ≤ B`. Spaces around items are allowed.
    pub fn parse(text: &str) -> Result<CaseList, SelectionError> {
        let bad = |reason: String| SelectionError::BadList {
            text: text.to_string(),
            reason,
        };
        let number = |s: &str| -> Result<usize, SelectionError> {
            let s = s.trim();
            if s.is_empty() || !s.bytes().all(|b| b.is_ascii_digit()) {
                return Err(bad(format!("'{s}' is not a case number")));
            }
            s.parse()
                .map_err(|_| bad(format!("'{s}' is not a case number")))
        };
        if text.trim().is_empty() {
            return Err(bad("it is empty".into()));
        }
        let mut ranges = Vec::new();
        for item in text.split(',') {
            let (start, end) = match item.split_once('-') {
                Some((a, b)) => (number(a)?, number(b)?),
                None => {
                    let k = number(item)?;
                    (k, k)
                }
            };
            if end < start {
                return Err(SelectionError::Reversed {
                    text: text.to_string(),
                    start,
                    end,
                });
            }
            ranges.push((start, end));
        }
        Ok(CaseList {
            text: text.to_string(),
            ranges,
        })
    }

    /// The case numbers of a sweep of `n_cases` cases, ascending and each
    /// once; refused when any lies outside the sweep.
    pub fn cases(&self, n_cases: usize) -> Result<Vec<usize>, SelectionError> {
        // The first case number outside the sweep, if any.
        if let Some(case) = self
            .ranges
            .iter()
            .filter(|&&(_, b)| b >= n_cases)
            .map(|&(a, _)| a.max(n_cases))
            .min()
        {
            return Err(SelectionError::OutOfRange {
                text: self.text.clone(),
                case,
                n_cases,
            });
        }
        let mut out: Vec<usize> = self.ranges.iter().flat_map(|&(a, b)| a..=b).collect();
        out.sort_unstable();
        out.dedup();
        Ok(out)
    }
}

/// One of `count` shards of contiguous cases (see the [module docs](self)).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// The shard's number, `0 ≤ index < count`.
    pub index: usize,
    /// Number of shards.
    pub count: usize,
}

impl Shard {
    /// Parses `I/N` with `0 ≤ I < N`.
    pub fn parse(text: &str) -> Result<Shard, SelectionError> {
        let bad = |reason: &str| SelectionError::BadShard {
            text: text.to_string(),
            reason: reason.to_string(),
        };
        let (i, n) = text.split_once('/').ok_or_else(|| bad("no '/'"))?;
        let num = |s: &str| {
            let s = s.trim();
            (!s.is_empty() && s.bytes().all(|b| b.is_ascii_digit()))
                .then(|| s.parse::<usize>().ok())
                .flatten()
        };
        let (index, count) = match (num(i), num(n)) {
            (Some(i), Some(n)) => (i, n),
            _ => return Err(bad("I and N must be whole numbers")),
        };
        if count == 0 {
            return Err(bad("N must be at least 1"));
        }
        if index >= count {
            return Err(bad("I must be below N (shards count from 0)"));
        }
        Ok(Shard { index, count })
    }

    /// The cases of this shard in a sweep of `n_cases` cases (empty when
    /// the fields break `index < count`, which [`Shard::parse`] refuses).
    pub fn cases(&self, n_cases: usize) -> Range<usize> {
        if self.index >= self.count {
            return 0..0;
        }
        // u128: no overflow of i·n for any usize inputs.
        let at = |i: usize| ((i as u128 * n_cases as u128) / self.count as u128) as usize;
        at(self.index)..at(self.index + 1)
    }
}

/// How a sweep is spread over the tasks of one job array: `n_jobs` shards
/// (`I/n_jobs` for task `I`), at most `cases_per_job` cases each unless
/// the array limit forces larger groups.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ArrayPlan {
    /// Number of cases of the sweep.
    pub n_cases: usize,
    /// Number of array tasks (shards); at least 1.
    pub n_jobs: usize,
    /// The largest number of cases any task runs.
    pub max_cases_per_job: usize,
}

impl ArrayPlan {
    /// Groups `n_cases` cases into array tasks of at most `cases_per_job`
    /// cases; when that would need more than `max_array_size` tasks, the
    /// tasks grow so that `max_array_size` of them hold every case.
    pub fn new(
        n_cases: usize,
        cases_per_job: usize,
        max_array_size: usize,
    ) -> Result<ArrayPlan, SelectionError> {
        if cases_per_job == 0 {
            return Err(SelectionError::Zero {
                what: "the number of cases per job",
            });
        }
        if max_array_size == 0 {
            return Err(SelectionError::Zero {
                what: "the array size limit",
            });
        }
        let n_jobs = n_cases.div_ceil(cases_per_job).clamp(1, max_array_size);
        Ok(ArrayPlan {
            n_cases,
            n_jobs,
            max_cases_per_job: n_cases.div_ceil(n_jobs),
        })
    }

    /// The shard that task `task` runs.
    pub fn shard(&self, task: usize) -> Shard {
        Shard {
            index: task,
            count: self.n_jobs,
        }
    }
}

/// Case numbers as comma-separated ranges (`4-7,12`), the form a case list
/// reads back. `cases` must be ascending.
pub fn compact_ranges(cases: &[usize]) -> String {
    let mut parts = Vec::new();
    let mut i = 0;
    while i < cases.len() {
        let start = cases[i];
        let mut end = start;
        while i + 1 < cases.len() && cases[i + 1] == end + 1 {
            end += 1;
            i += 1;
        }
        parts.push(if start == end {
            start.to_string()
        } else {
            format!("{start}-{end}")
        });
        i += 1;
    }
    parts.join(",")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn case_lists_read_numbers_ranges_and_mixtures() {
        let c = |t: &str| CaseList::parse(t).unwrap().cases(20).unwrap();
        assert_eq!(c("4"), vec![4]);
        assert_eq!(c("2-5"), vec![2, 3, 4, 5]);
        assert_eq!(c("3,5,7-9"), vec![3, 5, 7, 8, 9]);
        assert_eq!(c(" 9 , 7-8 ,3"), vec![3, 7, 8, 9]);
        // Overlaps run each case once.
        assert_eq!(c("2-4,3-5,4"), vec![2, 3, 4, 5]);
        assert_eq!(c("19"), vec![19]);
    }

    #[test]
    fn bad_case_lists_are_refused_with_the_value() {
        for bad in ["", "a", "3-", "-3", "1,,2", "1-2-3", "+4", "2.0"] {
            let e = CaseList::parse(bad).unwrap_err();
            assert!(matches!(e, SelectionError::BadList { .. }), "{bad}: {e}");
            assert!(e.to_string().contains(&format!("'{bad}'")), "{e}");
        }
        let e = CaseList::parse("5-2").unwrap_err();
        assert_eq!(
            e,
            SelectionError::Reversed {
                text: "5-2".into(),
                start: 5,
                end: 2
            }
        );
        let e = CaseList::parse("1,6-30").unwrap().cases(6).unwrap_err();
        assert_eq!(
            e.to_string(),
            "'1,6-30': case 6 does not exist; the sweep has cases 0 to 5"
        );
        let e = CaseList::parse("40,7").unwrap().cases(6).unwrap_err();
        assert!(e.to_string().contains("case 7 does not exist"), "{e}");
        let e = CaseList::parse("2-30").unwrap().cases(6).unwrap_err();
        assert!(e.to_string().contains("case 6 does not exist"), "{e}");
    }

    #[test]
    fn shards_hold_every_case_exactly_once_in_contiguous_balanced_groups() {
        for n in 0..40 {
            for count in 1..45 {
                let mut seen = vec![0u32; n];
                let mut next = 0;
                let mut sizes = Vec::new();
                for index in 0..count {
                    let r = Shard { index, count }.cases(n);
                    assert_eq!(r.start, next, "n {n} N {count}: gap or overlap");
                    next = r.end;
                    sizes.push(r.len());
                    for k in r {
                        seen[k] += 1;
                    }
                }
                assert_eq!(next, n);
                assert!(seen.iter().all(|&x| x == 1), "n {n} N {count}");
                let (lo, hi) = (sizes.iter().min().unwrap(), sizes.iter().max().unwrap());
                assert!(hi - lo <= 1, "n {n} N {count}: sizes {sizes:?}");
            }
        }
    }

    #[test]
    fn bad_shards_are_refused() {
        for bad in ["0/0", "3/3", "4/2", "1", "a/2", "1/b", "-1/2", "/", "1/2/3"] {
            let e = Shard::parse(bad).unwrap_err();
            assert!(e.to_string().contains(&format!("'{bad}'")), "{e}");
        }
        assert_eq!(Shard::parse("2/3").unwrap(), Shard { index: 2, count: 3 });
        // Fields set by hand outside the rule select nothing (no panic).
        assert_eq!(Shard { index: 0, count: 0 }.cases(5), 0..0);
        assert_eq!(Shard { index: 3, count: 2 }.cases(5), 0..0);
    }

    #[test]
    fn array_plans_group_cases_to_respect_the_array_limit() {
        // 64 cases, one per job, no limit reached: 64 tasks.
        let p = ArrayPlan::new(64, 1, 1000).unwrap();
        assert_eq!((p.n_jobs, p.max_cases_per_job), (64, 1));
        // 8 per job: 8 tasks of 8.
        let p = ArrayPlan::new(64, 8, 1000).unwrap();
        assert_eq!((p.n_jobs, p.max_cases_per_job), (8, 8));
        // 2500 cases one per job under a limit of 1000: 1000 tasks of 2 or 3.
        let p = ArrayPlan::new(2500, 1, 1000).unwrap();
        assert_eq!((p.n_jobs, p.max_cases_per_job), (1000, 3));
        let total: usize = (0..p.n_jobs).map(|t| p.shard(t).cases(2500).len()).sum();
        assert_eq!(total, 2500);
        // 10 cases, 3 per job: 4 tasks (3, 2, 3, 2 by the balanced split).
        let p = ArrayPlan::new(10, 3, 1000).unwrap();
        assert_eq!(p.n_jobs, 4);
        assert!((0..4).all(|t| p.shard(t).cases(10).len() <= 3));
        assert!(ArrayPlan::new(10, 0, 5).is_err());
        assert!(ArrayPlan::new(10, 1, 0).is_err());
    }

    #[test]
    fn compact_ranges_reads_back_as_the_same_case_list() {
        assert_eq!(compact_ranges(&[]), "");
        assert_eq!(compact_ranges(&[0]), "0");
        assert_eq!(compact_ranges(&[0, 1, 2, 5, 7, 8]), "0-2,5,7-8");
        let cases = vec![1, 2, 3, 9, 11, 12, 13, 14, 30];
        let text = compact_ranges(&cases);
        assert_eq!(CaseList::parse(&text).unwrap().cases(31).unwrap(), cases);
    }
}
