#include <memory>

#include "commands.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

void register_design(CLI::App& app) {
  auto* cmd = app.add_subcommand("design", "Search ranked, verified compensators for a spec");
  struct Args {
    std::string spec, objective;
    SearchArgs search;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("SPEC", a->spec, "spec file (JSON)")->required();
  add_result_options(cmd, a->search, "add the timings to the JSON (they vary from run to run; without them the "
                                     "JSON is byte-identical for the same spec and seed on any thread count)");
  add_search_options(cmd, a->search, "seed of the low-discrepancy starts (overrides search.seed)");
  cmd->add_option("--objective", a->objective, "least_effort, fastest, most_robust or simplest (overrides search.objective)")
      ->check(CLI::IsMember({"least_effort", "fastest", "most_robust", "simplest"}));
  cmd->callback([a] {
    select([a] {
      return guarded(a->spec, [&] {
        Spec spec = parse_spec(read_spec_file(a->spec));
        DesignOptions o = DesignOptions::FromSpec(spec);
        apply_search_args(a->search, o);
        for (Objective ob : {Objective::LeastEffort, Objective::Fastest, Objective::MostRobust, Objective::Simplest})
          if (a->objective == objective_name(ob)) o.objective = ob;
        require_valid(o);
        const DesignReport rep = run_design(spec, o);
        write_result(a->search, design_report_json(rep, a->search.timing), [&] { return design_report_text(rep); });
        return rep.met() ? kExitMet : kExitNotMet;
      });
    });
  });
}

}  // namespace pw::cli
