// libFuzzer target: a scene from arbitrary bytes through the whole pipeline (load, plan, check,
// a short export into memory). Every input must end in one of two ways: a c2path::Error that
// reads `fuzz.yaml:LINE:COL: error: MESSAGE` on one line, or a plan whose report and setpoints are
// finite. Anything else (another exception, a crash, a sanitizer report, a NaN) aborts.
//
// Built with clang as the `fuzz_scene` fuzzer (C2PATH_BUILD_FUZZERS=ON), and with any compiler
// into `fuzz_replay`, which feeds the files of tests/fuzz/corpus to the same function (ctest
// fuzz.replay), so the findings stay tested without clang.

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <string_view>

#include "c2path/error.hpp"
#include "c2path/export.hpp"
#include "c2path/limits.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/timing.hpp"

namespace {

[[noreturn]] void fail(const char* what, const std::string& detail) {
  std::fprintf(stderr, "fuzz_scene: %s: %s\n", what, detail.c_str());
  std::abort();
}

// The error contract of the scene loader and planner (what the CLI prints for bad input).
void check_error(const c2path::Error& e) {
  const std::string w = e.what();
  if (e.file() != "fuzz.yaml") fail("error without the file name", w);
  if (e.line() < 1 || e.column() < 1) fail("error without line and column", w);
  if (e.message().empty()) fail("error with an empty message", w);
  if (w.find('\n') != std::string::npos || w.find('\r') != std::string::npos) fail("error message spans lines", w);
  const std::string prefix = "fuzz.yaml:" + std::to_string(e.line()) + ":" + std::to_string(e.column()) + ": error: ";
  if (w.rfind(prefix, 0) != 0) fail("error message does not start with FILE:LINE:COL: error:", w);
}

void check_finite(double v, const char* what) {
  if (!std::isfinite(v)) fail("non-finite value in the report", what);
}

}  // namespace

/// Exceptions other than c2path::Error propagate and abort the run (a finding).
extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  c2path::Scene scene;
  c2path::Plan plan;
  try {
    scene = c2path::load_scene_text(text, "fuzz.yaml");
    plan = c2path::plan(scene);
  } catch (const c2path::Error& e) {
    check_error(e);
    return 0;
  }
  const c2path::Report r = c2path::check_limits(*plan.trajectory, plan.limits);
  check_finite(r.t_begin, "t_begin");
  check_finite(r.t_end, "t_end");
  if (!(r.duration > 0.0)) fail("move without a positive duration", std::to_string(r.duration));
  check_finite(r.stretch, "stretch");
  if (r.stretch < 1.0) fail("stretch below 1", std::to_string(r.stretch));
  if (r.peaks.size() != scene.axes.size()) fail("one peak set per axis", std::to_string(r.peaks.size()));
  for (const auto& p : r.peaks) {
    check_finite(p.pos_min, "pos_min");
    check_finite(p.pos_max, "pos_max");
    check_finite(p.vel, "vel");
    check_finite(p.acc, "acc");
    check_finite(p.jerk, "jerk");
  }
  if (r.ok != r.violations.empty()) fail("ok disagrees with the violations", r.message);

  // A short export: at most about 200 samples whatever the scene says, so one input stays fast.
  c2path::ExportOptions o;
  o.rate_hz = scene.exports.rate_hz ? *scene.exports.rate_hz : c2path::kDefaultRateHz;
  o.rate_hz = std::min(o.rate_hz, 200.0 / r.duration);
  if (!(o.rate_hz > 0.0) || !std::isfinite(o.rate_hz)) return 0;
  std::vector<std::string> names;
  for (const auto& a : scene.axes) names.push_back(a.name);
  std::size_t bytes = 0;
  std::size_t rows = 0;
  try {
    rows = c2path::write_setpoints(*plan.trajectory, names, o, [&](std::string_view chunk) {
      bytes += chunk.size();
      if (chunk.find("nan") != std::string_view::npos || chunk.find("inf") != std::string_view::npos)
        fail("non-finite setpoint", std::string(chunk.substr(0, 400)));
    });
  } catch (const c2path::Error& e) {
    // A rate the exporter refuses (e.g. above 10 MHz for a very short move) is fine: the CLI
    // reports it; anything else is a finding.
    if (std::string(e.what()).find("rate") == std::string::npos) fail("export failed", e.what());
    return 0;
  }
  if (rows < 2 || bytes == 0) fail("export wrote nothing", std::to_string(rows));
  return 0;
}
