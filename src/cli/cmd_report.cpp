#include <filesystem>
#include <memory>

#include "commands.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/outputs/report_sweep.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

void register_report(CLI::App& app) {
  auto* cmd = app.add_subcommand("report", "Write a self-contained HTML report (inline SVG) for a check, design or retune "
                                           "result, or for a sweep directory (or its shard directories)");
  struct Args {
    std::vector<std::string> inputs;
    std::string out, x, y, metric;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("RESULT", a->inputs, "result file (JSON) written by check, design or retune -o; or one or more sweep "
                                       "directories of one sweep (shards are merged by point index)")->required();
  cmd->add_option("-o,--output", a->out, "the HTML file to write (atomically)")->required();
  cmd->add_option("--x", a->x, "sweep: the parameter across the map (default: the first with more than one value)");
  cmd->add_option("--y", a->y, "sweep: the parameter up the map (default: the next with more than one value)");
  cmd->add_option("--metric", a->metric, "sweep: the metric of the second map (default: the base spec's first requirement)");
  cmd->callback([a] {
    select([a] {
      return guarded(a->inputs.front(), [&] {
        const bool sweep = std::filesystem::is_directory(a->inputs.front());
        if (sweep) {
          for (const std::string& d : a->inputs)
            if (!std::filesystem::is_directory(d)) throw SpecError(d, "is not a sweep directory (give only directories)");
          const ReportData data = naming_options({{"dirs", "DIR"}, {"x", "--x"}, {"y", "--y"}, {"metric", "--metric"}},
                                                 [&] { return prepare_sweep_report(a->inputs, {a->x, a->y, a->metric}); });
          emit(a->out, report_html(data));
          return kExitMet;
        }
        if (a->inputs.size() > 1) throw SpecError("RESULT", "give one result file (several inputs are for sweep shard directories)");
        for (const auto& [name, value] : {std::pair<const char*, const std::string*>{"--x", &a->x}, {"--y", &a->y}, {"--metric", &a->metric}})
          if (!value->empty()) throw SpecError(name, "applies to sweep directories only");
        const nlohmann::json doc = read_json_file(a->inputs.front());
        if (doc.is_object() && doc.contains("base") && doc.contains("parameters") && !doc.contains("tool"))
          throw SpecError("$", "is a sweep file, not a result: run it with `polewright sweep FILE --out DIR`, then report DIR");
        emit(a->out, report_html(parse_result(doc)));
        return kExitMet;
      });
    });
  });
}

}  // namespace pw::cli
