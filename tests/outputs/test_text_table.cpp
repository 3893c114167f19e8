#include <catch2/catch.hpp>

#include "outputs/text_table.hpp"

using namespace pw;

TEST_CASE("text table aligns columns", "[outputs][text_table]") {
  TextTable t({"a", "long header"});
  t.add({"wide cell", "x"});
  const std::string s = t.render("");
  CHECK(s == "a          long header\n---------  -----------\nwide cell  x\n");
  CHECK(fmt_number(1234567.0) == "1.235e+06");
  CHECK(fmt_number(std::optional<double>()) == "-");
  CHECK(fmt_number(NAN) == "-");
}
