#include <memory>

#include "commands.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

void register_report(CLI::App& app) {
  auto* cmd = app.add_subcommand("report", "Write a self-contained HTML report (inline SVG) for a check or design result");
  struct Args {
    std::string result, out;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("RESULT", a->result, "result file (JSON) written by check -o or design -o")->required();
  cmd->add_option("-o,--output", a->out, "the HTML file to write (atomically)")->required();
  cmd->callback([a] {
    select([a] {
      return guarded(a->result, [&] {
        emit(a->out, report_html(parse_result(read_json_file(a->result))));
        return kExitMet;
      });
    });
  });
}

}  // namespace pw::cli
