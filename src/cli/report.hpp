#pragma once
// Shared pieces of the c2path command: loading a scene through the pipeline and printing reports.

#include <cstdio>
#include <optional>
#include <string>

#include "c2path/limits.hpp"
#include "c2path/scene.hpp"
#include "c2path/timing.hpp"

namespace c2path::cli {

/// The caution printed by check and export.
extern const char* const kCaution;

/// A scene, its plan and its check.
struct Loaded {
  Scene scene;
  Plan plan;
  Report report;
};

/// load_scene_file + plan + check_limits. Throws c2path::Error.
Loaded load_and_check(const std::string& path);

/// %g with `digits` significant digits, no "-0".
std::string num(double v, int digits = 6);

void print_violations(std::FILE* out, const Loaded& l);
void print_stretch(std::FILE* out, const Loaded& l);
/// The `check` table, violations, stretch factor, result and caution on stdout.
void print_table(const Loaded& l);
/// The `check --json` object on stdout.
void print_json(const Loaded& l);

}  // namespace c2path::cli
