#include <memory>

#include "commands.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/outputs/retune_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

void register_retune(CLI::App& app) {
  auto* cmd = app.add_subcommand("retune", "Move the compensator in service (the spec's current) as little as "
                                           "possible until it meets the spec's requirements");
  struct Args {
    std::string spec;
    bool allow_new = false;
    SearchArgs search;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("SPEC", a->spec, "spec file (JSON) with a current compensator")->required();
  add_result_options(cmd, a->search, "add the timings to the JSON");
  cmd->add_flag("--allow-new-stages", a->allow_new,
                "when moving the existing corners is not enough, add a stage (lead/lag or integrator, then a notch)");
  add_search_options(cmd, a->search, "seed of the perturbed starts (overrides search.seed)");
  cmd->callback([a] {
    select([a] {
      return guarded(a->spec, [&] {
        const Spec spec = parse_spec(read_spec_file(a->spec));
        if (!spec.current) throw SpecError("$.current", "is missing: retune needs the compensator in service");
        RetuneOptions o = RetuneOptions::FromSpec(spec);
        o.allow_new_stages = a->allow_new;
        apply_search_args(a->search, o);
        require_valid(o);
        const RetuneReport rep = run_retune(spec, o);
        write_result(a->search, retune_report_json(rep, a->search.timing), [&] { return retune_report_text(rep); });
        return rep.met() ? kExitMet : kExitNotMet;
      });
    });
  });
}

}  // namespace pw::cli
