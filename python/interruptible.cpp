#include "interruptible.hpp"

#include <condition_variable>
#include <exception>
#include <mutex>
#include <optional>
#include <thread>

#include <pybind11/pybind11.h>

namespace py = pybind11;

namespace pwpy {

void run_interruptible(const std::function<void(const std::atomic<bool>*)>& body, std::chrono::milliseconds poll) {
  std::atomic<bool> cancel{false};
  std::exception_ptr error;
  std::mutex mutex;
  std::condition_variable finished;
  bool done = false;
  std::thread worker;
  {
    py::gil_scoped_release release;
    worker = std::thread([&] {
      try {
        body(&cancel);
      } catch (...) {
        error = std::current_exception();
      }
      std::lock_guard<std::mutex> lock(mutex);
      done = true;
      finished.notify_all();
    });
  }
  std::optional<py::error_already_set> interrupted;
  for (;;) {
    bool over = false;
    {
      py::gil_scoped_release release;
      std::unique_lock<std::mutex> lock(mutex);
      over = finished.wait_for(lock, poll, [&] { return done; });
    }
    if (over) break;
    if (PyErr_CheckSignals() != 0) {  // a handler raised (KeyboardInterrupt): stop the search
      interrupted.emplace();          // takes the pending Python error
      cancel = true;
      break;
    }
  }
  {
    py::gil_scoped_release release;
    worker.join();
  }
  if (interrupted) throw *interrupted;
  if (error) std::rethrow_exception(error);
}

}  // namespace pwpy
