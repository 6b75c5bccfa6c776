#pragma once
/// \file scene_yaml.hpp
/// Reading and writing scene files (YAML, format 1). The only scene code that touches files.

#include <string>
#include <string_view>

#include "c2path/scene.hpp"

namespace c2path {

/// Largest scene file accepted [bytes].
inline constexpr std::size_t kMaxSceneBytes = 64u << 20;

/// Largest number of YAML values (scalars, lists, mappings, aliases) a scene file may hold. yaml-cpp
/// needs about 500 bytes per value, so this bounds the loader's memory to about 4 GB (1,000,000
/// waypoints of 2 axes and a time are 7,000,000 values); the count is taken by a pass over the
/// parser's events before any value is stored.
inline constexpr std::size_t kMaxYamlValues = 8'000'000;

/// Parses a scene from YAML text. `file` names the source in messages. Throws c2path::Error
/// (`FILE:LINE:COL: error: ...`) for syntax errors, duplicate or unknown keys (naming the nearest
/// valid key), wrong types, non-finite numbers and every rule of validate_scene().
[[nodiscard]] Scene load_scene_text(std::string_view text, const std::string& file);

/// Reads and parses a scene file; "-" reads standard input (named "<stdin>" in messages).
[[nodiscard]] Scene load_scene_file(const std::string& path);

/// The scene as YAML text, format 1 (comments of the original file are not kept). Numbers are
/// written shortest-round-trip, so load_scene_text(scene_to_yaml(s)) gives the same values.
[[nodiscard]] std::string scene_to_yaml(const Scene& scene);

/// Writes scene_to_yaml(scene) to `path` atomically (temporary file beside it, then rename).
void save_scene_file(const Scene& scene, const std::string& path);

}  // namespace c2path
