//! Reading the ledger on one thread while another checks what was read.
//!
//! The verify walk spends about as long in SQLite, reading rows, as in
//! hashing, parsing and counting what it read. SQLite stays on the thread
//! that holds the connection (a connection is not shared between threads)
//! and hands what it read, in batches, to a second thread, which takes it
//! in the order it was read: everything the second thread does happens in
//! chain order, exactly as in one thread, so results do not depend on how
//! the two threads are scheduled. What was read goes back to the reading
//! thread to be freed or reused there: memory freed by another thread
//! than the one that took it makes the allocator lock, and the reading
//! thread then waits on the lock more than it reads.

use std::sync::mpsc;

use super::entry::EntryMeta;
use super::exposure_scan::SealedRows;
use super::stored::Undecodable;

/// How many reads go to the second thread at a time.
const BATCH: usize = 64;

/// How many batches may wait for the second thread.
const IN_FLIGHT: usize = 4;

/// One thing read, in the order read.
#[derive(Debug)]
pub enum Read {
    /// Exposure rows (their row hashes) read on their own.
    Loose(Vec<Box<[u8]>>),
    /// An entry and its sealed rows.
    Entry(Box<EntryRead>),
}

/// An entry row as the walk takes it, owned.
#[derive(Debug)]
pub struct EntryRead {
    pub seq: i64,
    /// The hash and prev columns as text, read only when `content` is an
    /// error (else they are those of its meta).
    pub hash: Option<String>,
    pub prev: Option<String>,
    pub sealed: SealedRows,
    /// Its stored body text (when `content` is its meta).
    pub body: String,
    /// Its meta, or why it does not decode.
    pub content: Result<EntryMeta, Undecodable>,
}

impl Default for EntryRead {
    fn default() -> Self {
        EntryRead {
            seq: 0,
            hash: None,
            prev: None,
            sealed: SealedRows::default(),
            body: String::new(),
            content: Err(String::new()),
        }
    }
}

/// The reading thread's side: where reads go, and where spent ones come
/// back.
pub struct Reads<'a> {
    batch: Vec<Read>,
    send: &'a mpsc::SyncSender<Vec<Read>>,
    spent: &'a mpsc::Receiver<Vec<Read>>,
    // Boxes, because a read carries its entry in one: reusing the box
    // saves allocating it again.
    #[allow(clippy::vec_box)]
    spare: Vec<Box<EntryRead>>,
}

impl Reads<'_> {
    /// Hand `read` on; false once the other thread is gone (it panicked:
    /// the panic is raised again when both are done).
    pub fn emit(&mut self, read: Read) -> bool {
        self.batch.push(read);
        self.batch.len() < BATCH || self.flush()
    }

    fn flush(&mut self) -> bool {
        let full = std::mem::replace(&mut self.batch, Vec::with_capacity(BATCH));
        full.is_empty() || self.send.send(full).is_ok()
    }

    /// An entry to fill, its buffers reused from a spent read when there
    /// is one (its old content is dropped here).
    pub fn entry(&mut self) -> Box<EntryRead> {
        if self.spare.is_empty() {
            for read in self.spent.try_iter().flatten() {
                match read {
                    Read::Entry(e) if self.spare.len() < BATCH => self.spare.push(e),
                    _ => {}
                }
            }
        }
        match self.spare.pop() {
            Some(mut e) => {
                e.hash = None;
                e.prev = None;
                e.body.clear();
                e.content = Err(String::new());
                e
            }
            None => Box::default(),
        }
    }
}

/// Run `produce` on this thread and `consume` on another, `consume`
/// taking every [`Read`] that `produce` emits, in order. The first error
/// of `produce` is returned after `consume` has taken what was emitted.
pub fn in_two_threads<E>(
    produce: impl FnOnce(&mut Reads<'_>) -> Result<(), E>,
    mut consume: impl FnMut(&mut Read) + Send,
) -> Result<(), E> {
    let (send, receive) = mpsc::sync_channel::<Vec<Read>>(IN_FLIGHT);
    let (give_back, spent) = mpsc::channel::<Vec<Read>>();
    std::thread::scope(|scope| {
        let worker = scope.spawn(move || {
            for mut batch in receive {
                batch.iter_mut().for_each(&mut consume);
                // Nobody takes spent reads once the reading thread is done.
                let _ = give_back.send(batch);
            }
        });
        let mut reads = Reads {
            batch: Vec::with_capacity(BATCH),
            send: &send,
            spent: &spent,
            spare: Vec::new(),
        };
        let produced = produce(&mut reads);
        reads.flush();
        drop(send);
        if let Err(panic) = worker.join() {
            std::panic::resume_unwind(panic);
        }
        produced
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn loose(n: u8) -> Read {
        Read::Loose(vec![Box::from([n].as_slice())])
    }

    fn number(read: &Read) -> u8 {
        match read {
            Read::Loose(rows) => rows[0][0],
            Read::Entry(_) => u8::MAX,
        }
    }

    fn entry(seq: i64) -> Read {
        Read::Entry(Box::new(EntryRead {
            seq,
            ..EntryRead::default()
        }))
    }

    #[test]
    fn everything_emitted_is_taken_in_order() {
        let mut taken = Vec::new();
        let out: Result<(), ()> = in_two_threads(
            |reads| {
                for n in 0..=200u8 {
                    assert!(reads.emit(loose(n)));
                    assert!(reads.emit(entry(n.into())));
                    assert_eq!(reads.entry().body, "", "a reused entry is empty");
                }
                Ok(())
            },
            |read| {
                taken.push(match read {
                    Read::Loose(rows) => i64::from(rows[0][0]),
                    Read::Entry(e) => -e.seq,
                })
            },
        );
        assert_eq!(out, Ok(()));
        let want: Vec<i64> = (0..=200).flat_map(|n| [n, -n]).collect();
        assert_eq!(taken, want);
    }

    #[test]
    fn an_error_comes_back_after_what_was_emitted_is_taken() {
        let mut taken = Vec::new();
        let out = in_two_threads(
            |reads| {
                reads.emit(loose(1));
                reads.emit(loose(2));
                Err("cannot read")
            },
            |read| taken.push(number(read)),
        );
        assert_eq!(out, Err("cannot read"));
        assert_eq!(taken, [1, 2]);
    }

    #[test]
    fn a_panic_of_the_second_thread_is_raised_again() {
        let outcome = std::panic::catch_unwind(|| {
            in_two_threads::<()>(
                |reads| {
                    let mut n = 0u8;
                    while reads.emit(loose(n)) {
                        n = n.wrapping_add(1);
                    }
                    Ok(())
                },
                |read| assert_ne!(number(read), 7, "seven"),
            )
        });
        assert!(outcome.is_err());
    }
}
