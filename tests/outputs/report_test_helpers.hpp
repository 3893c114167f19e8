// Checks shared by the report tests (internal to the tests): the outer SVGs of a page, balanced
// tags, drawn data, and the page-wide rules (no nan/inf, cautions, nothing fetched).
#pragma once

#include <catch2/catch.hpp>

#include <cctype>
#include <regex>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "polewright/outputs/json_values.hpp"

namespace pw_test_report {

using namespace pw;

// The outer <svg> elements (nested viewports excluded) as substrings.
inline std::vector<std::string> outer_svgs(const std::string& html) {
  std::vector<std::string> out;
  size_t pos = 0;
  while ((pos = html.find("<svg xmlns=", pos)) != std::string::npos) {
    int depth = 0;
    size_t i = pos;
    for (;;) {
      const size_t open = html.find("<svg", i + 1), close = html.find("</svg>", i + 1);
      if (close == std::string::npos) return out;
      if (open != std::string::npos && open < close) {
        ++depth;
        i = open;
      } else if (depth == 0) {
        out.push_back(html.substr(pos, close + 6 - pos));
        pos = close + 6;
        break;
      } else {
        --depth;
        i = close;
      }
    }
  }
  return out;
}

// Tags balance like XML (the page is written as well-formed XHTML-style markup). A plain scanner:
// std::regex recurses per character and long path data would exhaust the stack.
inline bool tags_balance(const std::string& html, std::string* why) {
  std::vector<std::string> stack;
  size_t pos = html.find("<html");
  while ((pos = html.find('<', pos)) != std::string::npos) {
    const size_t end = html.find('>', pos);
    if (end == std::string::npos) {
      *why = "unterminated tag";
      return false;
    }
    const bool closing = html[pos + 1] == '/';
    size_t n = pos + (closing ? 2 : 1);
    size_t k = n;
    while (k < end && std::isalnum(static_cast<unsigned char>(html[k]))) ++k;
    const std::string name = html.substr(n, k - n);
    const bool self_closing = html[end - 1] == '/';
    pos = end + 1;
    if (name.empty() || self_closing) continue;
    if (closing) {
      if (stack.empty() || stack.back() != name) {
        *why = "unexpected </" + name + "> (open: " + (stack.empty() ? std::string("none") : stack.back()) + ")";
        return false;
      }
      stack.pop_back();
    } else {
      stack.push_back(name);
    }
  }
  if (!stack.empty()) *why = "unclosed <" + stack.back() + ">";
  return stack.empty();
}

// A data path (class "pw-data...") whose d attribute starts with a move command and has more.
inline bool has_drawn_data(const std::string& svg) {
  size_t pos = 0;
  while ((pos = svg.find("class=\"pw-data", pos)) != std::string::npos) {
    const size_t end = svg.find('>', pos);
    const size_t d = svg.find(" d=\"M", pos);
    if (d != std::string::npos && d < end && svg[d + 5] != '"' && svg[d + 6] != '"') return true;
    pos = end;
  }
  return false;
}

inline void check_page(const std::string& html, size_t plots) {
  std::string why;
  CHECK(tags_balance(html, &why));
  INFO(why);
  const std::vector<std::string> svgs = outer_svgs(html);
  CHECK(svgs.size() == plots);
  for (const std::string& s : svgs) CHECK(has_drawn_data(s));
  CHECK_FALSE(std::regex_search(html, std::regex("\\b(nan|inf|infinity)\\b", std::regex::icase)));
  CHECK(html.find(kCautions) != std::string::npos);
  CHECK(html.find("<script") == std::string::npos);
  // Nothing fetched: the only URL is the SVG namespace name.
  const std::string stripped = std::regex_replace(html, std::regex("http://www\\.w3\\.org/2000/svg"), "");
  CHECK_FALSE(std::regex_search(stripped, std::regex("https?:|url\\(|@import|<link|src=")));
}


// Number of subpaths (move commands) in the d attributes of the filled data paths of one SVG.
inline size_t filled_subpaths(const std::string& svg) {
  size_t n = 0, pos = 0;
  while ((pos = svg.find("class=\"pw-data pw-fill\"", pos)) != std::string::npos) {
    const size_t end = svg.find("/>", pos);
    const size_t d = svg.find(" d=\"", pos);
    if (d != std::string::npos && d < end) {
      const size_t q = svg.find('"', d + 4);
      for (size_t i = d + 4; i < q; ++i) n += svg[i] == 'M';
    }
    pos = end;
  }
  return n;
}

}  // namespace pw_test_report
