#include <cstdio>
#include <iostream>
#include <memory>

#include "commands.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

void register_validate(CLI::App& app) {
  auto* cmd = app.add_subcommand("validate", "Parse a spec and report the first problem (exit 0 valid, 2 invalid)");
  auto spec = std::make_shared<std::string>();
  cmd->add_option("SPEC", *spec, "spec file (JSON)")->required();
  cmd->callback([spec] {
    select([spec] {
      return guarded(*spec, [&] {
        const Spec s = parse_spec(read_spec_file(*spec));
        std::printf("%s: valid spec, %zu plant(s), %zu requirement bound(s)\n", spec->c_str(), s.plants.size(),
                    s.requirements.items.size());
        return kExitMet;
      });
    });
  });
}

void register_check(CLI::App& app) {
  auto* cmd = app.add_subcommand("check", "Evaluate a compensator against every requirement and plant variant");
  struct Args {
    std::string spec, compensator, out, report;
    bool json = false, find_sample_time = false;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("SPEC", a->spec, "spec file (JSON)")->required();
  cmd->add_option("--compensator", a->compensator, "file holding a compensator object (default: the spec's current)");
  cmd->add_option("-o,--output", a->out, "write the report as JSON to this file (atomically)");
  cmd->add_flag("--json", a->json, "print the JSON report to stdout instead of the table");
  cmd->add_option("--report", a->report, "also write the HTML report to this file (atomically)");
  cmd->add_flag("--find-sample-time", a->find_sample_time,
                "also find the slowest sample time at which the sampled loop meets (the spec's implementation, else tustin)");
  cmd->callback([a] {
    select([a] {
      std::string file = a->spec;
      return guarded(file, [&] {
        const Spec spec = parse_spec(read_spec_file(a->spec));
        Zpk comp;
        if (!a->compensator.empty()) {
          file = a->compensator;
          comp = parse_compensator(read_json_file(a->compensator), "$");
          file = a->spec;
        } else if (spec.current) {
          comp = *spec.current;
        } else {
          throw SpecError("$.current", "is missing: give a current compensator or --compensator FILE");
        }
        // With --compensator, an error in the compensator is that file's, at its root.
        CheckOptions options;
        options.find_sample_time = a->find_sample_time;
        if (!a->compensator.empty()) {
          options.compensator_path = "$";
          file = a->compensator;
        }
        const CheckReport report = run_check(spec, comp, options);
        file = a->spec;
        const nlohmann::json j = check_report_json(report);
        if (!a->out.empty()) emit(a->out, j.dump(1) + "\n");
        if (!a->report.empty()) emit(a->report, report_html(parse_result(j)));
        if (a->json) emit("-", j.dump(1) + "\n");
        else std::cout << check_report_text(report);
        return report.evaluation.all_met ? kExitMet : kExitNotMet;
      });
    });
  });
}

}  // namespace pw::cli
