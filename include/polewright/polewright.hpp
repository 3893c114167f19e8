// Everything polewright offers as a library, in one include: the public headers of every layer
// (model -> analysis -> requirements -> synthesis -> jobs -> outputs) and the version.
//   #include <polewright/polewright.hpp>   with find_package(polewright) and polewright::polewright
#pragma once

#include "polewright/version.hpp"

#include "polewright/model/biquad.hpp"
#include "polewright/model/discretize.hpp"
#include "polewright/model/eigen.hpp"
#include "polewright/model/pade.hpp"
#include "polewright/model/plant.hpp"
#include "polewright/model/polynomial.hpp"
#include "polewright/model/root_accuracy.hpp"
#include "polewright/model/state_space.hpp"
#include "polewright/model/types.hpp"
#include "polewright/model/zpk.hpp"

#include "polewright/analysis/analysis_options.hpp"
#include "polewright/analysis/closed_loop.hpp"
#include "polewright/analysis/discrete_loop.hpp"
#include "polewright/analysis/frequency.hpp"
#include "polewright/analysis/locus.hpp"
#include "polewright/analysis/steady_state.hpp"
#include "polewright/analysis/step.hpp"

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/metric.hpp"
#include "polewright/requirements/region.hpp"
#include "polewright/requirements/requirement_set.hpp"
#include "polewright/requirements/result_parse.hpp"
#include "polewright/requirements/spec.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "polewright/requirements/spelling.hpp"
#include "polewright/requirements/sweep_parse.hpp"

#include "polewright/synthesis/limits.hpp"
#include "polewright/synthesis/local_search.hpp"
#include "polewright/synthesis/parallel.hpp"
#include "polewright/synthesis/parameters.hpp"
#include "polewright/synthesis/problem.hpp"
#include "polewright/synthesis/retune_space.hpp"
#include "polewright/synthesis/seeds.hpp"
#include "polewright/synthesis/structure.hpp"

#include "polewright/jobs/check.hpp"
#include "polewright/jobs/design.hpp"
#include "polewright/jobs/export.hpp"
#include "polewright/jobs/retune.hpp"
#include "polewright/jobs/sweep.hpp"

#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/export_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/outputs/report_sweep.hpp"
#include "polewright/outputs/retune_output.hpp"
#include "polewright/outputs/sweep_store.hpp"
