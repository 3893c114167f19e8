#include <sys/stat.h>

#include <fstream>
#include <sstream>

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

}  // namespace

nlohmann::json parse_json_text(const std::string& text) {
  if (text.size() > kMaxInputBytes)
    throw SpecError("$", "input is larger than " + std::to_string(kMaxInputBytes >> 20) + " MiB");
  check_nesting(text);
  try {
    return nlohmann::json::parse(text);
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
