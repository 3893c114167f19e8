// A compensator read as a PID controller, when its zeros and poles have that shape: the parallel
// form Kp + Ki / s + Kd s / (Tf s + 1) and the standard (ideal, filtered) form
// K (1 + 1 / (Ti s) + Td s / ((Td / N) s + 1)), both exact rewritings of the same transfer function.
#pragma once

#include <optional>

#include "polewright/model/zpk.hpp"

namespace pw {

enum class PidShape { P, PI, PD, PID };  // PD and PID carry a derivative filter (Tf > 0)

const char* pid_shape_name(PidShape s);  // "P", "PI", "PD", "PID"

// C(s) = Kp + Ki / s + Kd s / (Tf s + 1); Ki = 0 without an integrator, Kd = Tf = 0 without a
// derivative.
struct PidParallel {
  double kp = 0.0;
  double ki = 0.0;  // 1/s
  double kd = 0.0;  // s
  double tf = 0.0;  // s
};

// C(s) = K (1 + 1 / (Ti s) + Td s / ((Td / N) s + 1)); Ti = infinity without an integrator (kept as
// 0 with has_integral false), Td = 0 and N = 0 without a derivative.
struct PidStandard {
  double k = 0.0;
  double ti = 0.0;  // s
  double td = 0.0;  // s
  double n = 0.0;   // Td / Tf
};

struct PidForm {
  PidShape shape = PidShape::P;
  PidParallel parallel;
  std::optional<PidStandard> standard;  // needs Kp != 0
};

// The PID reading of `c`, or nothing when `c` is not one: at most one pole at the origin, at most
// one other pole (real, in the left half plane: the derivative filter), and a derivative only with
// that filter pole; the zeros (real or a conjugate pair) make up the rest. A reading whose terms do
// not all share the sign of the gain (for example an integrator with a lag, which gives Kd < 0) is
// not a PID and gives nothing. Root tolerance for "at the origin": zpk_origin_tolerance.
std::optional<PidForm> pid_form(const Zpk& c);

// The transfer function of a parallel-form PID (round trip of pid_form).
Zpk zpk_from_pid(const PidParallel& p);

}  // namespace pw
