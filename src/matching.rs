//! The least-cost partial matching of a sparse bipartite graph whose edges all have negative
//! costs: each row takes at most one column and each column at most one row, and a row may
//! stay unmatched at cost 0. Used where the dense assignment of a large group of candidates
//! would not fit in memory.
//!
//! Method: successive shortest augmenting paths with node potentials (Dijkstra on reduced
//! costs), as in R. Jonker, A. Volgenant, "A shortest augmenting path algorithm for dense and
//! sparse linear assignment problems", Computing 38:325-340, 1987. Each row gets a private
//! zero-cost "unmatched" column, which turns the partial matching into a full assignment of the
//! rows; rows are added one at a time and every augmentation keeps the matching optimal for the
//! rows added so far. Memory is linear in the edges.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

/// A heap entry: the tentative distance of a column node, smallest first.
#[derive(PartialEq)]
struct Entry(f64, usize);

impl Eq for Entry {}

impl PartialOrd for Entry {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for Entry {
    fn cmp(&self, other: &Self) -> Ordering {
        other.0.total_cmp(&self.0).then(other.1.cmp(&self.1))
    }
}

/// The least-cost partial matching of `rows` rows and `columns` columns over `edges`
/// `(row, column, cost)`, every cost negative and finite (others are ignored). Returns the
/// matched `(row, column)` pairs, sorted. O(rows x (edges + columns) log) in the worst case,
/// far less when augmenting paths are short.
pub fn sparse_partial_matching(
    rows: usize,
    columns: usize,
    edges: &[(usize, usize, f64)],
) -> Vec<(usize, usize)> {
    // Adjacency by row (compressed).
    let mut start = vec![0usize; rows + 1];
    for &(r, _, w) in edges {
        if w < 0.0 && w.is_finite() {
            start[r + 1] += 1;
        }
    }
    for r in 0..rows {
        start[r + 1] += start[r];
    }
    let mut fill = start.clone();
    let mut adjacent = vec![(0usize, 0.0f64); start[rows]];
    for &(r, c, w) in edges {
        if w < 0.0 && w.is_finite() {
            adjacent[fill[r]] = (c, w);
            fill[r] += 1;
        }
    }
    // Column nodes: the real columns 0..columns, then row r's private column columns + r.
    let nodes = columns + rows;
    let mut row_potential = vec![0.0f64; rows];
    let mut column_potential = vec![0.0f64; nodes];
    let mut owner = vec![usize::MAX; nodes]; // the row matched to each column node
    let mut matched = vec![usize::MAX; rows]; // the column node of each row
    let mut distance = vec![f64::INFINITY; nodes];
    let mut previous = vec![usize::MAX; nodes]; // the row from which a column was reached
    let mut done = vec![false; nodes];
    let mut touched: Vec<usize> = Vec::new();
    let mut heap = BinaryHeap::new();
    for source in 0..rows {
        // Keep reduced costs non-negative on the new row's edges.
        let lowest = adjacent[start[source]..start[source + 1]]
            .iter()
            .map(|&(c, w)| w - column_potential[c])
            .fold(0.0f64, f64::min);
        row_potential[source] = lowest;
        // Dijkstra from `source` over alternating paths.
        let relax = |row: usize,
                     base: f64,
                     distance: &mut Vec<f64>,
                     previous: &mut Vec<usize>,
                     touched: &mut Vec<usize>,
                     heap: &mut BinaryHeap<Entry>,
                     done: &[bool]| {
            let private = columns + row;
            let mut push = |c: usize, reduced: f64| {
                let d = base + reduced.max(0.0);
                if !done[c] && d < distance[c] {
                    if distance[c] == f64::INFINITY {
                        touched.push(c);
                    }
                    distance[c] = d;
                    previous[c] = row;
                    heap.push(Entry(d, c));
                }
            };
            push(
                private,
                0.0 - row_potential[row] - column_potential[private],
            );
            for &(c, w) in &adjacent[start[row]..start[row + 1]] {
                push(c, w - row_potential[row] - column_potential[c]);
            }
        };
        relax(
            source,
            0.0,
            &mut distance,
            &mut previous,
            &mut touched,
            &mut heap,
            &done,
        );
        let mut settled: Vec<usize> = Vec::new();
        let end = loop {
            let Entry(d, c) = heap.pop().expect("the private column is always reachable");
            if done[c] || d > distance[c] {
                continue;
            }
            done[c] = true;
            settled.push(c);
            let next = owner[c];
            if next == usize::MAX {
                break c;
            }
            relax(
                next,
                d,
                &mut distance,
                &mut previous,
                &mut touched,
                &mut heap,
                &done,
            );
        };
        // Update the potentials of the settled columns and of their rows.
        let last = distance[end];
        for &c in &settled {
            let shift = last - distance[c];
            column_potential[c] -= shift;
            if owner[c] != usize::MAX {
                row_potential[owner[c]] += shift;
            }
        }
        row_potential[source] += last;
        // Augment along the path back to the source.
        let mut c = end;
        loop {
            let row = previous[c];
            let before = matched[row];
            matched[row] = c;
            owner[c] = row;
            if row == source {
                break;
            }
            c = before;
        }
        for &c in &touched {
            distance[c] = f64::INFINITY;
            previous[c] = usize::MAX;
            done[c] = false;
        }
        touched.clear();
        heap.clear();
    }
    let mut pairs: Vec<(usize, usize)> = (0..rows)
        .filter(|&r| matched[r] < columns)
        .map(|r| (r, matched[r]))
        .collect();
    pairs.sort_unstable();
    pairs
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{RngExt, SeedableRng};

    fn cost(edges: &[(usize, usize, f64)], pairs: &[(usize, usize)]) -> f64 {
        pairs
            .iter()
            .map(|&(r, c)| {
                edges
                    .iter()
                    .filter(|e| e.0 == r && e.1 == c)
                    .map(|e| e.2)
                    .fold(f64::INFINITY, f64::min)
            })
            .sum()
    }

    /// Against the dense Jonker-Volgenant solver of the `lsap` crate (the algorithm behind
    /// scipy's linear_sum_assignment) on the same problem written densely: non-edges cost 0,
    /// which is what leaving both unmatched costs.
    #[test]
    fn agrees_with_the_dense_assignment() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(11);
        for case in 0..400 {
            // Every fourth case is larger, for long augmenting paths.
            let size = if case % 4 == 0 { 40 } else { 9 };
            let rows = rng.random_range(0..size);
            let columns = rng.random_range(0..size);
            let mut edges = Vec::new();
            for r in 0..rows {
                for c in 0..columns {
                    if rng.random_bool(0.4) {
                        // Some ties on purpose.
                        let w = -(rng.random_range(1..6u32) as f64) / 2.0;
                        edges.push((r, c, w));
                    }
                }
            }
            let pairs = sparse_partial_matching(rows, columns, &edges);
            let mut rows_seen = vec![false; rows];
            let mut columns_seen = vec![false; columns];
            for &(r, c) in &pairs {
                assert!(!rows_seen[r] && !columns_seen[c], "case {case}: one-to-one");
                rows_seen[r] = true;
                columns_seen[c] = true;
            }
            let got = cost(&edges, &pairs);
            let expected = if rows == 0 || columns == 0 {
                0.0
            } else {
                let mut matrix = vec![0.0; rows * columns];
                for &(r, c, w) in &edges {
                    matrix[r * columns + c] = w;
                }
                let (ri, ci) = lsap::solve(rows, columns, &matrix, false).unwrap();
                ri.iter()
                    .zip(&ci)
                    .map(|(&r, &c)| matrix[r * columns + c])
                    .sum()
            };
            assert!(
                (got - expected).abs() < 1e-9,
                "case {case}: {got} vs {expected}"
            );
        }
    }

    #[test]
    fn empty_and_one_edge() {
        assert!(sparse_partial_matching(0, 0, &[]).is_empty());
        assert!(sparse_partial_matching(3, 2, &[]).is_empty());
        assert_eq!(sparse_partial_matching(2, 2, &[(1, 0, -1.0)]), vec![(1, 0)]);
    }
}
