#include <iostream>
#include <memory>

#include "commands.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

void register_design(CLI::App& app) {
  auto* cmd = app.add_subcommand("design", "Search ranked, verified compensators for a spec");
  struct Args {
    std::string spec, out, objective, report;
    bool json = false, timing = false;
    int keep = -1, threads = -1;
    long long seed = -1;
    double budget_s = -1.0;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("SPEC", a->spec, "spec file (JSON)")->required();
  cmd->add_option("-o,--output", a->out, "write the result as JSON to this file (atomically)");
  cmd->add_flag("--json", a->json, "print the JSON result to stdout instead of the table");
  cmd->add_option("--report", a->report, "also write the HTML report to this file (atomically)");
  cmd->add_flag("--timing", a->timing, "add the timings to the JSON (they vary from run to run; without them the "
                                       "JSON is byte-identical for the same spec and seed on any thread count)");
  cmd->add_option("--keep", a->keep, "number of candidates (overrides search.keep)")->check(whole_range(1, 100));
  cmd->add_option("--seed", a->seed, "seed of the low-discrepancy starts (overrides search.seed)")->check(whole_range(0, 9007199254740991LL));  // the spec's search.seed range
  cmd->add_option("--budget-s", a->budget_s, "escalation budget when the first pass meets nothing, seconds at a nominal "
                                             "evaluation rate (counted in evaluations: deterministic; 0 = none; overrides search.budget_s)")
      ->check(CLI::Range(0.0, 1e7));
  cmd->add_option("--threads", a->threads, "worker threads, 0 = all cores (overrides search.threads)")->check(whole_range(0, 1024));
  cmd->add_option("--objective", a->objective, "least_effort, fastest, most_robust or simplest (overrides search.objective)")
      ->check(CLI::IsMember({"least_effort", "fastest", "most_robust", "simplest"}));
  cmd->callback([a] {
    select([a] {
      return guarded(a->spec, [&] {
        Spec spec = parse_spec(read_json_file(a->spec));
        DesignOptions o = DesignOptions::FromSpec(spec);
        if (a->keep > 0) o.keep = a->keep;
        if (a->threads >= 0) o.threads = a->threads;
        if (a->seed >= 0) o.seed = static_cast<unsigned long long>(a->seed);
        if (a->budget_s >= 0.0) o.budget_s = a->budget_s;
        for (Objective ob : {Objective::LeastEffort, Objective::Fastest, Objective::MostRobust, Objective::Simplest})
          if (a->objective == objective_name(ob)) o.objective = ob;
        std::string err;
        if (!o.IsValid(&err)) throw SpecError("$.search", err);
        const DesignReport rep = run_design(spec, o);
        const nlohmann::json j = design_report_json(rep, a->timing);
        if (!a->out.empty()) emit(a->out, j.dump(1) + "\n");
        if (!a->report.empty()) emit(a->report, report_html(parse_result(j)));
        if (a->json) emit("-", j.dump(1) + "\n");
        else std::cout << design_report_text(rep);
        return rep.met() ? kExitMet : kExitNotMet;
      });
    });
  });
}

}  // namespace pw::cli
