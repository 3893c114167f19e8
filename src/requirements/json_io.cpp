#include <sys/stat.h>

#include <fstream>
#include <set>
#include <sstream>
#include <vector>

#include "json_reader.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw {

namespace {

// Nesting depth of the raw text, counted before parsing so that a hostile file cannot recurse deep.
void check_nesting(const std::string& text) {
  int depth = 0;
  bool in_string = false, escape = false;
  for (char c : text) {
    if (in_string) {
      if (escape) escape = false;
      else if (c == '\\') escape = true;
      else if (c == '"') in_string = false;
      continue;
    }
    if (c == '"') in_string = true;
    else if (c == '[' || c == '{') {
      if (++depth > kMaxNesting)
        throw SpecError("$", "nesting deeper than " + std::to_string(kMaxNesting) + " levels");
    } else if (c == ']' || c == '}') {
      --depth;
    }
  }
}

// Refuses a key that appears twice in one object (nlohmann keeps the last one silently) and a NUL
// character in any string. Follows the parser's events to know the JSON path being read.
class DuplicateKeyGuard {
 public:
  bool operator()(int, nlohmann::json::parse_event_t event, nlohmann::json& parsed) {
    using E = nlohmann::json::parse_event_t;
    switch (event) {
      case E::object_start:
      case E::array_start:
        frames_.push_back({event == E::object_start, child_path(), {}, {}, 0});
        break;
      case E::key: {
        Frame& f = frames_.back();
        f.key = parsed.is_string() ? parsed.get<std::string>() : std::string();
        if (f.key.find('\0') != std::string::npos)
          throw SpecError(f.path, "has a key with a NUL character (\\u0000), which no name may hold");
        if (!f.keys.insert(f.key).second)
          throw SpecError(detail::key_path(f.path, f.key), "appears twice in one object (a duplicate key)");
        break;
      }
      case E::object_end:
      case E::array_end:
        frames_.pop_back();
        advance();
        break;
      case E::value:
        // A NUL inside a string would cut names short in C APIs and reach the text and HTML outputs.
        if (parsed.is_string() && parsed.get_ref<const std::string&>().find('\0') != std::string::npos)
          throw SpecError(child_path(), "holds a NUL character (\\u0000), which no text may hold");
        advance();
        break;
    }
    return true;
  }

 private:
  struct Frame {
    bool object = false;
    std::string path;
    std::set<std::string> keys;
    std::string key;
    size_t index = 0;
  };
  std::string child_path() const {
    if (frames_.empty()) return "$";
    const Frame& f = frames_.back();
    return f.object ? detail::key_path(f.path, f.key) : detail::index_path(f.path, f.index);
  }
  void advance() {
    if (!frames_.empty() && !frames_.back().object) ++frames_.back().index;
  }
  std::vector<Frame> frames_;
};

}  // namespace

nlohmann::json parse_json_text(const std::string& text) {
  if (text.size() > kMaxInputBytes)
    throw SpecError("$", "input is larger than " + std::to_string(kMaxInputBytes >> 20) + " MiB");
  check_nesting(text);
  try {
    DuplicateKeyGuard guard;
    return nlohmann::json::parse(text, [&guard](int depth, nlohmann::json::parse_event_t event, nlohmann::json& parsed) {
      return guard(depth, event, parsed);
    });
  } catch (const nlohmann::json::parse_error& e) {
    // Line and column of the byte offset.
    size_t line = 1, col = 1;
    for (size_t i = 0; i + 1 < e.byte && i < text.size(); ++i) {
      if (text[i] == '\n') { ++line; col = 1; } else { ++col; }
    }
    std::string what = e.what();
    const size_t cut = what.find("syntax error");
    if (cut != std::string::npos) what = what.substr(cut);
    throw SpecError("$", "invalid JSON at line " + std::to_string(line) + ", column " + std::to_string(col) + ": " + what);
  } catch (const nlohmann::json::exception& e) {
    // For example a number beyond double range (1e777): nlohmann reports it as out_of_range.
    std::string what = e.what();
    const size_t cut = what.find("] ");
    if (cut != std::string::npos) what = what.substr(cut + 2);
    if (what.size() > 120) what = what.substr(0, 117) + "...";
    throw SpecError("$", "invalid JSON: " + what);
  }
}

nlohmann::json read_json_file(const std::string& path) {
  struct stat st {};
  if (stat(path.c_str(), &st) != 0) throw SpecError("$", "cannot read " + path + ": no such file");
  if (S_ISDIR(st.st_mode)) throw SpecError("$", path + " is a directory, not a JSON file");
  if (static_cast<size_t>(st.st_size) > kMaxInputBytes)
    throw SpecError("$", path + " is larger than " + std::to_string(kMaxInputBytes >> 20) + " MiB");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw SpecError("$", "cannot read " + path + ": permission denied or unreadable");
  std::ostringstream ss;
  ss << in.rdbuf();
  if (in.bad()) throw SpecError("$", "cannot read " + path);
  return parse_json_text(ss.str());
}

}  // namespace pw
