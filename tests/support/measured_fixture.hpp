// Test helper: the cases of tests/reference/measured_fixture.json (make_measured_fixture.py) with
// their data files.
#pragma once

#include <fstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "polewright/model/measured.hpp"
#include "polewright/model/zpk.hpp"

namespace pw::test {

struct MeasuredCase {
  std::string name;
  Zpk plant;
  double delay = 0.0;
  Zpk compensator;
  MeasuredResponse data;
  nlohmann::json loop;  // exact loop figures of compensator x true plant
};

inline std::string measured_fixture_dir() { return std::string(POLEWRIGHT_SOURCE_DIR) + "/tests/reference"; }

inline MeasuredCase measured_case(const std::string& name) {
  std::ifstream in(measured_fixture_dir() + "/measured_fixture.json");
  const nlohmann::json j = nlohmann::json::parse(in);
  for (const auto& c : j.at("cases")) {
    if (c.at("name") != name) continue;
    MeasuredCase m;
    m.name = name;
    for (const auto& z : c.at("zeros")) m.plant.zeros.emplace_back(z[0].get<double>(), z[1].get<double>());
    for (const auto& p : c.at("poles")) m.plant.poles.emplace_back(p[0].get<double>(), p[1].get<double>());
    m.plant.gain = c.at("gain");
    m.delay = c.at("delay");
    for (const auto& z : c.at("comp").at("zeros")) m.compensator.zeros.emplace_back(z.get<double>(), 0.0);
    for (const auto& p : c.at("comp").at("poles")) m.compensator.poles.emplace_back(p.get<double>(), 0.0);
    m.compensator.gain = c.at("comp").at("gain");
    m.data = read_measured_file(measured_fixture_dir() + "/measured/" + name + ".csv", MeasuredReadOptions{});
    m.loop = c.at("loop");
    return m;
  }
  throw std::runtime_error("no measured case " + name);
}

}  // namespace pw::test
