//! Capillary trapping: bounded, interleaved searches that find the pieces a
//! defending cluster splits into when one element changes phase.
//!
//! When element `e` stops conducting the defending phase, its defending
//! neighbours may now lie in separate pieces. One breadth-first search
//! starts from each neighbour; the searches advance in turns, one element
//! each. Searches that meet are merged (they share a piece). A piece that
//! reaches an exit escapes; a piece whose searches run out of elements
//! without reaching an exit is trapped. When it is known that at least one
//! piece must escape (`e` was not itself an exit), the search stops as soon
//! as a single undecided piece remains and no other escaped: that piece is
//! the connected one and is never explored. The work is therefore bounded
//! by the smaller pieces, and no event searches the whole network (see
//! DEVELOPERS.md for the argument).

use std::collections::VecDeque;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Status {
    Active,
    Escaped,
    Exhausted,
}

/// Scratch space of the split search, reused across events.
#[derive(Clone, Debug)]
pub struct SplitSearch {
    owner: Vec<u32>,
    touched: Vec<u32>,
    queues: Vec<VecDeque<u32>>,
    parent: Vec<usize>,
    status: Vec<Status>,
    progressed: Vec<bool>,
    /// Elements visited over all searches (for the cost report).
    pub visited_total: u64,
    /// Number of searches run.
    pub searches: u64,
}

const NONE: u32 = u32::MAX;

impl SplitSearch {
    /// Scratch for `n_elements` elements.
    pub fn new(n_elements: usize) -> SplitSearch {
        SplitSearch {
            owner: vec![NONE; n_elements],
            touched: Vec::new(),
            queues: Vec::new(),
            parent: Vec::new(),
            status: Vec::new(),
            progressed: Vec::new(),
            visited_total: 0,
            searches: 0,
        }
    }

    fn find(&mut self, mut i: usize) -> usize {
        while self.parent[i] != i {
            self.parent[i] = self.parent[self.parent[i]];
            i = self.parent[i];
        }
        i
    }

    fn union(&mut self, a: usize, b: usize) {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra == rb {
            return;
        }
        let (keep, drop) = if ra < rb { (ra, rb) } else { (rb, ra) };
        self.parent[drop] = keep;
        let merged = match (self.status[keep], self.status[drop]) {
            (Status::Escaped, _) | (_, Status::Escaped) => Status::Escaped,
            _ => Status::Active,
        };
        self.status[keep] = merged;
    }

    /// Finds the trapped pieces among the pieces containing `seeds`.
    ///
    /// - `conducts(x)`: element `x` belongs to the defending cluster (holds
    ///   the phase, conducts it, and is not already trapped);
    /// - `is_exit(x)`: the phase escapes at element `x`;
    /// - `neighbours(x, out)`: appends the neighbours of `x` to `out`;
    /// - `one_must_escape`: at least one piece is known to reach an exit.
    ///
    /// Calls `trapped(piece)` once per trapped piece with its elements.
    pub fn run<C, X, N, T>(
        &mut self,
        seeds: &[usize],
        conducts: C,
        is_exit: X,
        neighbours: N,
        one_must_escape: bool,
        mut trapped: T,
    ) where
        C: Fn(usize) -> bool,
        X: Fn(usize) -> bool,
        N: Fn(usize, &mut super::Neighbours),
        T: FnMut(&[u32]),
    {
        self.searches += 1;
        self.queues.iter_mut().for_each(VecDeque::clear);
        self.parent.clear();
        self.status.clear();
        let mut n = 0usize;
        for &s in seeds {
            if !conducts(s) || self.owner[s] != NONE {
                continue;
            }
            if self.queues.len() <= n {
                self.queues.push(VecDeque::new());
            }
            self.owner[s] = n as u32;
            self.touched.push(s as u32);
            self.queues[n].push_back(s as u32);
            self.parent.push(n);
            self.status.push(if is_exit(s) {
                Status::Escaped
            } else {
                Status::Active
            });
            n += 1;
        }
        if n == 0 || (n == 1 && one_must_escape) {
            self.reset();
            return;
        }
        let mut progressed = std::mem::take(&mut self.progressed);
        let mut nb = super::Neighbours::new();
        loop {
            // Decide whether to stop.
            let mut active_roots = 0usize;
            let mut any_escaped = false;
            for i in 0..n {
                if self.parent[i] == i {
                    match self.status[i] {
                        Status::Active => active_roots += 1,
                        Status::Escaped => any_escaped = true,
                        Status::Exhausted => {}
                    }
                }
            }
            if active_roots == 0 || (one_must_escape && !any_escaped && active_roots == 1) {
                break;
            }
            // One step of every search whose piece is undecided.
            progressed.clear();
            progressed.resize(n, false);
            for i in 0..n {
                let root = self.find(i);
                if self.status[root] != Status::Active {
                    continue;
                }
                let Some(x) = self.queues[i].pop_front() else {
                    continue;
                };
                progressed[root] = true;
                self.visited_total += 1;
                nb.clear();
                neighbours(x as usize, &mut nb);
                for &y in &nb {
                    if !conducts(y) {
                        continue;
                    }
                    let o = self.owner[y];
                    if o == NONE {
                        self.owner[y] = i as u32;
                        self.touched.push(y as u32);
                        self.queues[i].push_back(y as u32);
                        if is_exit(y) {
                            let r = self.find(i);
                            self.status[r] = Status::Escaped;
                        }
                    } else if self.find(o as usize) != self.find(i) {
                        self.union(o as usize, i);
                    }
                }
            }
            // Pieces whose searches all ran dry are trapped.
            for i in 0..n {
                if self.parent[i] != i || self.status[i] != Status::Active {
                    continue;
                }
                let dry = (0..n).all(|j| self.queues[j].is_empty() || self.find(j) != i);
                if dry && !progressed[i] {
                    self.status[i] = Status::Exhausted;
                }
            }
        }
        self.progressed = progressed;
        // Report exhausted pieces.
        let mut piece: Vec<u32> = Vec::new();
        for root in 0..n {
            if self.parent[root] != root || self.status[root] != Status::Exhausted {
                continue;
            }
            piece.clear();
            for k in 0..self.touched.len() {
                let x = self.touched[k];
                let o = self.owner[x as usize] as usize;
                if self.find(o) == root {
                    piece.push(x);
                }
            }
            piece.sort_unstable();
            trapped(&piece);
        }
        self.reset();
    }

    fn reset(&mut self) {
        for &x in &self.touched {
            self.owner[x as usize] = NONE;
        }
        self.touched.clear();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A path graph 0-1-2-…-(n-1); `removed` does not conduct.
    fn path_neighbours(n: usize) -> impl Fn(usize, &mut crate::engine::Neighbours) {
        move |x, v| {
            if x > 0 {
                v.push(x - 1);
            }
            if x + 1 < n {
                v.push(x + 1);
            }
        }
    }

    #[test]
    fn cutting_a_path_traps_the_side_without_exit() {
        // Exit at element 9; removing element 3 leaves 0..3 trapped.
        let mut s = SplitSearch::new(10);
        let mut found = Vec::new();
        s.run(
            &[2, 4],
            |x| x != 3,
            |x| x == 9,
            path_neighbours(10),
            true,
            |p| found.push(p.to_vec()),
        );
        assert_eq!(found, vec![vec![0, 1, 2]]);
    }

    #[test]
    fn loop_keeps_both_sides_connected() {
        // A ring of 8 with exit at 5: removing 0 splits nothing.
        let ring = |x: usize, v: &mut crate::engine::Neighbours| {
            v.push((x + 1) % 8);
            v.push((x + 7) % 8);
        };
        let mut s = SplitSearch::new(8);
        let mut found = 0;
        s.run(&[1, 7], |x| x != 0, |x| x == 5, ring, true, |_| found += 1);
        assert_eq!(found, 0);
    }

    #[test]
    fn removing_the_exit_itself_traps_every_piece() {
        // Exit element 5 is removed: both halves are trapped.
        let mut s = SplitSearch::new(10);
        let mut found = Vec::new();
        s.run(
            &[4, 6],
            |x| x != 5,
            |x| x == 5,
            path_neighbours(10),
            false,
            |p| found.push(p.len()),
        );
        found.sort();
        assert_eq!(found, vec![4, 5]);
    }

    #[test]
    fn large_connected_side_is_not_explored() {
        // Small dead end 0..2 cut off from a long path with the exit at
        // the far end: the work is bounded by the small side.
        let n = 100_000;
        let mut s = SplitSearch::new(n);
        let mut found = Vec::new();
        s.run(
            &[1, 3],
            |x| x != 2,
            |x| x == n - 1,
            path_neighbours(n),
            true,
            |p| found.push(p.to_vec()),
        );
        assert_eq!(found, vec![vec![0, 1]]);
        assert!(s.visited_total < 10, "visited {}", s.visited_total);
    }
}
