//! What one connection keeps between statements: its layers by name.
//!
//! Layers live as long as the connection that built them: the state is
//! shared (an `Arc`) by the closures of ambit's functions and tables on
//! that connection, which SQLite drops when the connection closes.

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex, MutexGuard};

use crate::proximity::Layer;
use crate::sql::error;

/// The layers of one connection.
#[derive(Default)]
pub struct ConnState {
    layers: Mutex<BTreeMap<String, Arc<Layer>>>,
    /// How many calls of ambit's scalar functions on this connection have
    /// failed: lets ambit_layer see that another expression of its own
    /// statement failed (SQLite then still finalises the aggregate, with
    /// no sign of the error).
    failures: AtomicU64,
}

impl ConnState {
    /// Counts one failed call of an ambit function on this connection.
    pub fn note_failure(&self) {
        self.failures.fetch_add(1, Ordering::Relaxed);
    }

    /// How many calls of ambit functions on this connection have failed.
    pub fn failures(&self) -> u64 {
        self.failures.load(Ordering::Relaxed)
    }

    fn lock(&self) -> MutexGuard<'_, BTreeMap<String, Arc<Layer>>> {
        // A panic while the lock was held cannot leave the map half
        // updated (every change is one insert or remove), so a poisoned
        // lock is still usable.
        self.layers.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// The layer called `name`, or an error for `function` that lists the
    /// layers there are and says how to build one.
    pub fn layer(&self, function: &str, name: &str) -> rusqlite::Result<Arc<Layer>> {
        let layers = self.lock();
        if let Some(layer) = layers.get(name) {
            return Ok(Arc::clone(layer));
        }
        let known = if layers.is_empty() {
            "there are no layers yet".to_string()
        } else {
            let names: Vec<String> = layers.keys().map(|k| format!("'{k}'")).collect();
            format!("layers on this connection: {}", names.join(", "))
        };
        Err(error(
            function,
            format!(
                "no layer named '{name}' on this connection ({known}); build it with SELECT ambit_layer('{name}', geom) FROM ..."
            ),
        ))
    }

    /// The layer called `name`, if there is one.
    pub fn find(&self, name: &str) -> Option<Arc<Layer>> {
        self.lock().get(name).cloned()
    }

    /// Stores `layer` as `name`, replacing any layer of that name.
    pub fn put(&self, name: &str, layer: Layer) {
        self.lock().insert(name.to_string(), Arc::new(layer));
    }

    /// Removes and returns the layer called `name`.
    pub fn take(&self, name: &str) -> Option<Arc<Layer>> {
        self.lock().remove(name)
    }

    /// Every layer, by name.
    pub fn all(&self) -> Vec<(String, Arc<Layer>)> {
        self.lock()
            .iter()
            .map(|(k, v)| (k.clone(), Arc::clone(v)))
            .collect()
    }
}
