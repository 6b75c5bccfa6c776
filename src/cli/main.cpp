// c2path: the command line. Thin over the library: load, plan, check, export.

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <optional>
#include <string>
#include <unistd.h>
#include <vector>

#include "c2path/error.hpp"
#include "c2path/export.hpp"
#include "c2path/limits.hpp"
#include "c2path/scene_yaml.hpp"
#include "c2path/timing.hpp"
#include "commands.hpp"
#include "report.hpp"

namespace {

using namespace c2path;
using namespace c2path::cli;

int run_view(const std::string& scene, const char* argv0) {
  std::string exe = "c2path-view";
  std::error_code ec;
  const auto self = std::filesystem::read_symlink("/proc/self/exe", ec);
  if (!ec) {
    const auto beside = self.parent_path() / "c2path-view";
    if (std::filesystem::exists(beside, ec)) exe = beside.string();
  }
  (void)argv0;
  std::vector<char*> args = {exe.data(), const_cast<char*>(scene.c_str()), nullptr};
  ::execvp(exe.c_str(), args.data());
  std::fprintf(stderr, "c2path: error: cannot start c2path-view (%s); is it built and installed?\n", exe.c_str());
  return 2;
}

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"c2path: smooth (C2) moves for motion-control rigs and small robots, checked against each axis's limits"};
  app.set_version_flag("--version", std::string("c2path ") + C2PATH_VERSION);
  app.require_subcommand(1);
  std::string scene_path;
  bool json = false;

  auto* check = app.add_subcommand("check", "report travel, peak vel/acc/jerk and every limit violation; exit 0 within limits, 1 violations, 2 bad input");
  check->add_option("SCENE", scene_path, "scene file (YAML, format 1), or - for standard input")->required();
  check->add_flag("--json", json, "print one JSON object instead of the table");

  ExportArgs export_args;
  auto* exp = add_export_command(app, export_args);
  VerifyArgs verify_args;
  auto* verify = add_verify_command(app, verify_args);

  auto* view = app.add_subcommand("view", "open the scene in the viewer (c2path-view)");
  view->add_option("SCENE", scene_path, "scene file")->required();

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::string msg = e.what();
    for (auto& c : msg)
      if (c == '\n') c = ' ';
    std::fprintf(stderr, "c2path: error: %s (see c2path --help)\n", msg.c_str());
    return 2;
  }

  try {
    if (*view) return run_view(scene_path, argv[0]);
    if (*check) {
      const Loaded l = load_and_check(scene_path);
      if (json) print_json(l);
      else print_table(l);
      return l.report.ok ? 0 : 1;
    }
    if (*exp) return run_export(export_args);
    if (*verify) return run_verify(verify_args);
  } catch (const Error& e) {
    std::fprintf(stderr, "%s%s\n", e.file().empty() ? "c2path: " : "", e.what());
    return 2;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "c2path: error: %s\n", e.what());
    return 2;
  }
  return 2;
}
