#include "atomic_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <stdexcept>
#include <vector>

namespace pw {

void write_file_atomically(const std::string& path, const std::string& content) {
  std::string tmpl = path + ".tmp-XXXXXX";
  std::vector<char> name(tmpl.begin(), tmpl.end());
  name.push_back('\0');
  const int fd = mkstemp(name.data());
  if (fd < 0) throw std::runtime_error("cannot write " + path + ": " + std::strerror(errno));
  const std::string tmp(name.data());
  auto fail = [&](const char* what) {
    const int err = errno;
    close(fd);
    unlink(tmp.c_str());
    throw std::runtime_error(std::string("cannot write ") + path + ": " + what + ": " + std::strerror(err));
  };
  size_t done = 0;
  while (done < content.size()) {
    const ssize_t n = write(fd, content.data() + done, content.size() - done);
    if (n < 0) {
      if (errno == EINTR) continue;
      fail("write");
    }
    done += static_cast<size_t>(n);
  }
  if (fchmod(fd, 0644) != 0) fail("chmod");
  if (fsync(fd) != 0) fail("fsync");
  if (close(fd) != 0) {
    unlink(tmp.c_str());
    throw std::runtime_error("cannot write " + path + ": close failed");
  }
  if (rename(tmp.c_str(), path.c_str()) != 0) {
    const int err = errno;
    unlink(tmp.c_str());
    throw std::runtime_error("cannot write " + path + ": " + std::strerror(err));
  }
}

}  // namespace pw
