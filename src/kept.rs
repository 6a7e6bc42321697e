//! Answers kept for the process: a bounded list of (key, answer), the oldest dropped first,
//! shared by every thread. For computations whose answer depends only on their key (the
//! envelope of a fluid and composition, a premix stage's plan), so that an edit or another
//! recipe that asks the same again is answered at once.

use std::collections::HashMap;
use std::hash::Hash;
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

/// Answers kept for the process by hash, for many small answers asked often (the phase
/// judgement of each state a plan visits): two generations of at most `capacity` each; a
/// full generation becomes the older one, whose answers move back to the newer when asked
/// again, and the generation before it is dropped. Shared by every thread.
pub struct KeptMap<K, V> {
    capacity: usize,
    kept: Mutex<Option<[HashMap<K, V>; 2]>>,
}

impl<K: Hash + Eq, V: Clone> KeptMap<K, V> {
    pub const fn new(capacity: usize) -> KeptMap<K, V> {
        KeptMap { capacity, kept: Mutex::new(None) }
    }

    /// The kept answer for `key`, else `compute`'s (kept where it is one). The lock is not
    /// held while computing.
    pub fn get_or_try<E>(&self, key: K, compute: impl FnOnce() -> Result<V, E>) -> Result<V, E> {
        if let Ok(mut guard) = self.kept.lock() {
            if let Some(generations) = guard.as_mut() {
                if let Some(v) = generations[0].get(&key) {
                    return Ok(v.clone());
                }
                if let Some((k, v)) = generations[1].remove_entry(&key) {
                    let answer = v.clone();
                    self.put(generations, k, v);
                    return Ok(answer);
                }
            }
        }
        let v = compute()?;
        if let Ok(mut guard) = self.kept.lock() {
            let generations = guard.get_or_insert_with(|| [HashMap::new(), HashMap::new()]);
            self.put(generations, key, v.clone());
        }
        Ok(v)
    }

    /// Into the newer generation, which first becomes the older one where it is full: at
    /// most twice the capacity in all.
    fn put(&self, [newer, older]: &mut [HashMap<K, V>; 2], key: K, v: V) {
        if newer.len() >= self.capacity {
            *older = std::mem::take(newer);
        }
        newer.insert(key, v);
    }

    /// How many answers are kept.
    #[cfg(test)]
    fn len(&self) -> usize {
        self.kept.lock().ok().and_then(|g| g.as_ref().map(|[a, b]| a.len() + b.len())).unwrap_or(0)
    }

    /// Forget every kept answer.
    pub fn clear(&self) {
        if let Ok(mut guard) = self.kept.lock() {
            *guard = None;
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

    #[test]
    fn the_map_keeps_two_generations_and_moves_an_answer_asked_again_forward() {
        let kept: KeptMap<u32, u32> = KeptMap::new(2);
        let calls = std::cell::Cell::new(0);
        let ask = |k: u32| {
            kept.get_or_try(k, || {
                calls.set(calls.get() + 1);
                Ok::<u32, ()>(k * 10)
            })
            .unwrap()
        };
        assert_eq!((ask(1), ask(2), ask(1)), (10, 20, 10));
        assert_eq!(calls.get(), 2);
        ask(3); // {1, 2} becomes the older generation; {3}
        ask(1); // moved forward: {3, 1}, older {2}
        assert_eq!(calls.get(), 3);
        ask(4); // {3, 1} older, {4}: 2 dropped
        ask(1);
        ask(3);
        assert_eq!(calls.get(), 4, "1 and 3 were still kept");
        ask(2);
        assert_eq!(calls.get(), 5, "2 was dropped with its generation");
        assert!(kept.get_or_try(7, || Err::<u32, &str>("no")).is_err());
        assert_eq!(kept.get_or_try(7, || Ok::<u32, &str>(70)), Ok(70), "a failure is not kept");
        // However many are asked, over and over, at most twice the capacity is kept.
        for _ in 0..3 {
            for k in 10..60 {
                ask(k);
                assert!(kept.len() <= 4);
            }
        }
        kept.clear();
        assert_eq!(kept.len(), 0);
        let before = calls.get();
        ask(1);
        assert_eq!(calls.get(), before + 1, "cleared, asked again");
    }
}
