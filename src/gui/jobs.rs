//! Work the window hands to another thread so that it keeps drawing meanwhile: a droop, a worst-case pattern's
//! response, a search for mixes, the review report. One type for all of them: started with the inputs it needs
//! (copied, so the user may go on editing), looked at once a frame without waiting, and dropped when its answer
//! is no longer wanted (the thread then finishes into nothing).

use std::sync::mpsc::{Receiver, TryRecvError, channel};

/// What a look at a job found.
#[derive(Debug, PartialEq)]
pub enum Poll<T> {
    /// Still working.
    Running,
    /// Finished with this answer (given once).
    Done(T),
    /// The thread ended without an answer (it could not be started, or it panicked): a bug, said as such.
    Lost,
}

/// One piece of work on its own thread, and the way its answer comes back.
#[derive(Debug)]
pub struct Job<T> {
    rx: Option<Receiver<T>>,
}

impl<T: Send + 'static> Job<T> {
    /// Start `work` on a thread named `name` (the name shows in a debugger and in a panic message).
    pub fn start(name: &str, work: impl FnOnce() -> T + Send + 'static) -> Job<T> {
        let (tx, rx) = channel();
        let started = std::thread::Builder::new().name(format!("hushrail-{name}")).spawn(move || {
            // The receiver is gone when the answer is no longer wanted (another board was opened): fine.
            let _ = tx.send(work());
        });
        // A thread that could not be started leaves the receiver without a sender: the first poll says Lost.
        drop(started);
        Job { rx: Some(rx) }
    }

    /// Look for the answer without waiting. After `Done` or `Lost` the job stays finished and says `Lost`.
    pub fn poll(&mut self) -> Poll<T> {
        let Some(rx) = &self.rx else { return Poll::Lost };
        match rx.try_recv() {
            Ok(answer) => {
                self.rx = None;
                Poll::Done(answer)
            }
            Err(TryRecvError::Empty) => Poll::Running,
            Err(TryRecvError::Disconnected) => {
                self.rx = None;
                Poll::Lost
            }
        }
    }

    /// Wait for the answer (for tests and for a caller that must have it now); `None` when the thread ended
    /// without one.
    pub fn wait(mut self) -> Option<T> {
        self.rx.take().and_then(|rx| rx.recv().ok())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::mpsc::channel;

    #[test]
    fn a_job_runs_beside_the_caller_and_gives_its_answer_once() {
        // The work waits for the test's word, so the job is seen running until then: the caller never blocks.
        let (go, wait) = channel::<()>();
        let mut job = Job::start("test", move || {
            wait.recv().unwrap();
            42
        });
        assert_eq!(job.poll(), Poll::Running);
        assert_eq!(job.poll(), Poll::Running);
        go.send(()).unwrap();
        let answer = loop {
            match job.poll() {
                Poll::Running => std::thread::yield_now(),
                other => break other,
            }
        };
        assert_eq!(answer, Poll::Done(42));
        assert_eq!(job.poll(), Poll::Lost, "an answer is given once");
    }

    #[test]
    fn a_job_whose_thread_panics_is_lost_not_hung() {
        let job = Job::<u8>::start("test-panic", || panic!("a bug in the work"));
        assert_eq!(job.wait(), None);
        assert_eq!(Job::start("test-wait", || 7).wait(), Some(7));
    }
}
