//! Answers kept for the process: a bounded list of (key, answer), the oldest dropped first,
//! shared by every thread. For computations whose answer depends only on their key (the
//! envelope of a fluid and composition, a premix stage's plan), so that an edit or another
//! recipe that asks the same again is answered at once.

use std::sync::Mutex;

pub struct Kept<K, V> {
    capacity: usize,
    kept: Mutex<Vec<(K, V)>>,
}

impl<K: PartialEq, V: Clone> Kept<K, V> {
    /// Keep at most `capacity` answers.
    pub const fn new(capacity: usize) -> Kept<K, V> {
        Kept { capacity, kept: Mutex::new(Vec::new()) }
    }

    /// The kept answer for `key`, else `compute`'s, kept where it is one. The lock is not
    /// held while computing: other threads go on (two asking at once may each compute it).
    pub fn get_or_try<E>(&self, key: K, compute: impl FnOnce() -> Result<V, E>) -> Result<V, E> {
        let found = self.kept.lock().ok().and_then(|kept| kept.iter().find(|(k, _)| *k == key).map(|(_, v)| v.clone()));
        if let Some(v) = found {
            return Ok(v);
        }
        let v = compute()?;
        if let Ok(mut kept) = self.kept.lock() {
            if kept.len() >= self.capacity {
                drop(kept.remove(0));
            }
            kept.push((key, v.clone()));
        }
        Ok(v)
    }

    /// Forget every kept answer (for the benchmarks: the next question is computed).
    pub fn clear(&self) {
        if let Ok(mut kept) = self.kept.lock() {
            kept.clear();
        }
    }

    /// [`Kept::get_or_try`] for a computation that always answers.
    pub fn get_or(&self, key: K, compute: impl FnOnce() -> V) -> V {
        match self.get_or_try(key, || Ok::<V, std::convert::Infallible>(compute())) {
            Ok(v) => v,
            Err(never) => match never {},
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_answer_is_computed_once_kept_to_capacity_and_failures_are_not_kept() {
        let kept: Kept<u32, u32> = Kept::new(2);
        let mut calls = 0;
        let mut ask = |k: u32| {
            kept.get_or(k, || {
                calls += 1;
                k * 10
            })
        };
        assert_eq!((ask(1), ask(1), ask(2)), (10, 10, 20));
        ask(3); // drops 1, the oldest
        assert_eq!(ask(1), 10);
        assert_eq!(calls, 4, "1, 2, 3, and 1 again after it was dropped");
        let failed: Result<u32, &str> = kept.get_or_try(9, || Err("no"));
        assert!(failed.is_err());
        assert_eq!(kept.get_or_try(9, || Ok::<u32, &str>(90)), Ok(90), "a failure is not kept");
        // Cleared, every answer is computed again.
        kept.clear();
        assert_eq!(kept.get_or(9, || 91), 91);
    }
}
