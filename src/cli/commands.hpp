#pragma once
// The `export` and `verify` subcommands: their options and what they run.

#include <CLI/CLI.hpp>

#include <optional>
#include <string>

namespace c2path::cli {

/// Command-line arguments of `c2path export`.
struct ExportArgs {
  std::string scene, out;
  std::string format = "csv";
  std::string columns;     ///< empty: pos,vel,acc
  std::string time = "seconds";
  std::string units = "native";
  std::string fps;         ///< empty: no frame export
  std::optional<double> rate, spacing, max_error;
  bool json = false, allow = false;
};

/// Registers `export` on `app`, filling `args` when parsed.
CLI::App* add_export_command(CLI::App& app, ExportArgs& args);
/// Runs it. Exit code 0 written, 1 refused (limits exceeded). Throws c2path::Error for bad input.
int run_export(const ExportArgs& args);

/// Command-line arguments of `c2path verify`.
struct VerifyArgs {
  std::string scene, file;
  std::string units = "native";
  std::string fps;
  std::optional<double> rate;
  bool json = false;
};

/// Registers `verify` on `app`.
CLI::App* add_verify_command(CLI::App& app, VerifyArgs& args);
/// Runs it: 0 the file passes, 1 findings. Throws c2path::Error for unreadable input.
int run_verify(const VerifyArgs& args);

}  // namespace c2path::cli
