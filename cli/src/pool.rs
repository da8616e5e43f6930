//! The one worker pool of the command line, for commands that run many
//! independent jobs: `check` (one scenario a job) and `sweep` (one member
//! a job). Up to N threads take the jobs in order; each result is handed
//! on in job order, whatever order the jobs finish in, so what a command
//! prints or writes is the same for any number of threads.

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::{Mutex, MutexGuard};

/// Results that finished early wait here until every earlier job is done.
struct InOrder<R, D> {
    next: usize,
    waiting: BTreeMap<usize, R>,
    deliver: D,
}

impl<R, E, D: FnMut(usize, R) -> Result<(), E>> InOrder<R, D> {
    fn put(&mut self, index: usize, result: R) -> Result<(), E> {
        self.waiting.insert(index, result);
        while let Some(r) = self.waiting.remove(&self.next) {
            (self.deliver)(self.next, r)?;
            self.next += 1;
        }
        Ok(())
    }
}

fn lock<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    // A worker that panicked leaves the data as it was; the panic itself
    // reaches the caller when the scope joins.
    m.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// Run `work` over `jobs` on up to `threads` threads (at least one, at most
/// one a job). Each thread first makes its own state with `init` (a
/// scenario runner, say) and passes it to `work` with each job's index and
/// the job. `deliver` receives every result with its job's index, in job
/// order. The first error, from `init` or `deliver`, stops the pool (no
/// job starts after it; those running finish) and is returned.
pub fn run_ordered<J, S, R, E>(
    jobs: &[J],
    threads: usize,
    init: impl Fn() -> Result<S, E> + Sync,
    work: impl Fn(&mut S, usize, &J) -> R + Sync,
    deliver: impl FnMut(usize, R) -> Result<(), E> + Send,
) -> Result<(), E>
where
    J: Sync,
    R: Send,
    E: Send,
{
    if jobs.is_empty() {
        return Ok(());
    }
    let sink = Mutex::new(InOrder {
        next: 0,
        waiting: BTreeMap::new(),
        deliver,
    });
    let next_job = AtomicUsize::new(0);
    let stop = AtomicBool::new(false);
    let failure: Mutex<Option<E>> = Mutex::new(None);
    let fail = |e: E| {
        stop.store(true, Ordering::SeqCst);
        lock(&failure).get_or_insert(e);
    };
    std::thread::scope(|scope| {
        for _ in 0..threads.clamp(1, jobs.len()) {
            scope.spawn(|| {
                let mut state = match init() {
                    Ok(s) => s,
                    Err(e) => return fail(e),
                };
                while !stop.load(Ordering::SeqCst) {
                    let i = next_job.fetch_add(1, Ordering::SeqCst);
                    let Some(job) = jobs.get(i) else { break };
                    let result = work(&mut state, i, job);
                    if let Err(e) = lock(&sink).put(i, result) {
                        return fail(e);
                    }
                }
            });
        }
    });
    match failure.into_inner().unwrap_or_else(|p| p.into_inner()) {
        Some(e) => Err(e),
        None => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn results_arrive_in_job_order_on_any_number_of_threads() {
        // Later jobs are shorter and tend to finish first; they still
        // arrive in order.
        let jobs: Vec<u64> = (0..40).rev().map(|k| k * 20_000).collect();
        for threads in [1, 2, 7] {
            let mut got = Vec::new();
            let r: Result<(), ()> = run_ordered(
                &jobs,
                threads,
                || Ok(0u64),
                |calls, i, &n| {
                    *calls += 1;
                    (i, (0..n).fold(0u64, |a, b| a.wrapping_add(b)))
                },
                |i, (j, sum)| {
                    assert_eq!(i, j);
                    got.push(sum);
                    Ok(())
                },
            );
            assert!(r.is_ok());
            let want: Vec<u64> = jobs.iter().map(|&n| n * n.saturating_sub(1) / 2).collect();
            assert_eq!(got, want, "{threads} threads");
        }
    }

    #[test]
    fn the_first_error_stops_the_pool() {
        let jobs: Vec<usize> = (0..100).collect();
        let mut delivered = 0;
        let r = run_ordered(
            &jobs,
            1,
            || Ok(()),
            |_, _, &j| j,
            |_, j| {
                delivered += 1;
                if j == 9 {
                    Err(format!("job {j} refused"))
                } else {
                    Ok(())
                }
            },
        );
        assert_eq!(r, Err("job 9 refused".to_string()));
        assert_eq!(delivered, 10);
        let r: Result<(), String> = run_ordered(
            &jobs,
            2,
            || Err("no runner".into()),
            |_: &mut (), _, _| (),
            |_, _| Ok(()),
        );
        assert_eq!(r, Err("no runner".to_string()));
        assert_eq!(
            run_ordered(
                &[] as &[u8],
                4,
                || Ok::<(), ()>(()),
                |_, _, _| (),
                |_, _| Ok(())
            ),
            Ok(())
        );
    }
}
