// Runs a long search without the GIL, and stops it when Python raises a signal exception
// (KeyboardInterrupt from Ctrl-C in a notebook or a terminal).
#pragma once

#include <atomic>
#include <chrono>
#include <functional>

namespace pwpy {

// Runs body(cancel) on a worker thread with the GIL released. The calling thread waits for it in
// slices of `poll`, and between slices takes the GIL back briefly to call PyErr_CheckSignals (the
// signal handlers run only on Python's main thread, so the watcher is the caller itself). When a
// handler raises, `cancel` is set, the worker is joined (it stops at its next check) and the
// Python exception propagates (pybind11::error_already_set); the body's own result is dropped.
// An exception thrown by the body is rethrown on the calling thread.
void run_interruptible(const std::function<void(const std::atomic<bool>* cancel)>& body,
                       std::chrono::milliseconds poll = std::chrono::milliseconds(50));

}  // namespace pwpy
