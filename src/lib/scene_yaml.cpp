#include "c2path/scene_yaml.hpp"

#include <yaml-cpp/depthguard.h>
#include <yaml-cpp/eventhandler.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <iterator>
#include <map>
#include <optional>
#include <sstream>

#include "detail/atomic_file.hpp"

namespace c2path {

namespace {

SourceLoc loc_of(const YAML::Node& n) {
  const YAML::Mark m = n.Mark();
  if (m.line < 0) return {};
  return {m.line + 1, m.column + 1};
}

std::size_t edit_distance(const std::string& a, const std::string& b) {
  std::vector<std::size_t> prev(b.size() + 1), cur(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) prev[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    cur[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j)
      cur[j] = std::min({prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1)});
    std::swap(prev, cur);
  }
  return prev[b.size()];
}

std::string nearest(const std::string& word, const std::vector<std::string>& valid) {
  std::string best;
  std::size_t best_d = std::string::npos;
  // Only the first 64 characters are compared: a huge unknown key against many long axis names
  // would otherwise cost their product (minutes for a few MB).
  const std::string w = word.substr(0, 64);
  for (const auto& v : valid) {
    const std::size_t d = edit_distance(w, v.substr(0, 64));
    if (d < best_d) {
      best_d = d;
      best = v;
    }
  }
  return best;
}

std::string join(const std::vector<std::string>& v) {
  std::string out;
  for (std::size_t i = 0; i < v.size(); ++i) out += (i ? ", " : "") + v[i];
  return out;
}

// What to do about yaml-cpp's most common syntax messages (its exceptions.h wording).
std::string yaml_hint(const std::string& msg) {
  static const std::pair<const char*, const char*> hints[] = {
      {"end of map flow not found", "a '{' is not closed: add the '}'"},
      {"end of sequence flow not found", "a '[' is not closed: add the ']'"},
      {"illegal flow end", "a ']' or '}' closes nothing here: check the brackets match"},
      {"end of map not found", "check the indentation: the keys of one mapping start in the same column"},
      {"end of sequence not found", "check the indentation: the '-' of one list start in the same column"},
      {"illegal map value", "a ':' is out of place: check the indentation, and quote text that contains ': '"},
      {"illegal block entry", "a '-' is out of place: check the indentation of the list"},
      {"tab", "indent with spaces, not tabs"},
      {"unknown escape character", "in double quotes write a backslash as \\\\, or use single quotes"},
      {"end of string", "a quote is not closed: add the closing quote"},
      {"anchor", "check the &anchor and *alias names"},
  };
  for (const auto& [key, hint] : hints)
    if (msg.find(key) != std::string::npos) return std::string("; ") + hint;
  return "; check the YAML syntax near this place";
}

// Document starts of a YAML text, from yaml-cpp's event parser, at most `cap` of them. yaml-cpp 0.7
// loops forever (allocating without bound) in YAML::LoadAll on some malformed inputs, e.g. a ','
// outside a flow collection: its parser then starts document after document without consuming
// anything. Here such a repeated start is reported as a syntax error at that place instead.
// The same pass counts the values, so that a file of millions of tiny values (yaml-cpp keeps about
// 500 bytes per value) is refused before yaml-cpp stores any of them (kMaxYamlValues).
class DocumentStarts final : public YAML::EventHandler {
 public:
  explicit DocumentStarts(const std::string& file) : file_(file) {}
  std::vector<YAML::Mark> starts;
  void OnDocumentStart(const YAML::Mark& mark) override { starts.push_back(mark); }
  void OnDocumentEnd() override {}
  void OnNull(const YAML::Mark& m, YAML::anchor_t) override { count(m); }
  void OnAlias(const YAML::Mark& m, YAML::anchor_t) override { count(m); }
  void OnScalar(const YAML::Mark& m, const std::string&, YAML::anchor_t, const std::string&) override { count(m); }
  void OnSequenceStart(const YAML::Mark& m, const std::string&, YAML::anchor_t, YAML::EmitterStyle::value) override { count(m); }
  void OnSequenceEnd() override {}
  void OnMapStart(const YAML::Mark& m, const std::string&, YAML::anchor_t, YAML::EmitterStyle::value) override { count(m); }
  void OnMapEnd() override {}

 private:
  void count(const YAML::Mark& m) {
    if (++values_ > kMaxYamlValues)
      throw Error(file_, SourceLoc{m.line >= 0 ? m.line + 1 : 1, m.column >= 0 ? m.column + 1 : 1},
                  "the file holds more than " + std::to_string(kMaxYamlValues) +
                      " YAML values; this is more than c2path loads (split the move)");
  }
  const std::string& file_;
  std::size_t values_ = 0;
};

class Loader {
 public:
  explicit Loader(std::string file) : file_(std::move(file)) {}

  // Every message is one line: control characters quoted from the file (a newline inside a
  // quoted key or name) are written as escapes.
  [[noreturn]] void fail(SourceLoc loc, const std::string& msg) const {
    std::string line = one_line(msg);
    if (line.size() > 1000) line = line.substr(0, 990) + " [...]";  // huge quoted values or key lists
    throw Error(file_, loc, line);
  }

  static std::string one_line(const std::string& msg) {
    std::string out;
    for (char c : msg) {
      const auto u = static_cast<unsigned char>(c);
      if (c == '\n') out += "\\n";
      else if (c == '\r') out += "\\r";
      else if (c == '\t') out += "\\t";
      else if (u < 0x20 || u == 0x7f) {
        static const char* hex = "0123456789abcdef";
        out += "\\x";
        out += hex[u >> 4];
        out += hex[u & 15];
      } else out += c;
    }
    return out;
  }
  [[noreturn]] void fail(const YAML::Node& n, const std::string& msg) const { fail(loc_of(n), msg); }

  static const char* kind(const YAML::Node& n) {
    switch (n.Type()) {
      case YAML::NodeType::Map: return "a mapping";
      case YAML::NodeType::Sequence: return "a list";
      case YAML::NodeType::Scalar: return "a value";
      case YAML::NodeType::Null: return "nothing";
      default: return "an undefined node";
    }
  }

  void expect_map(const YAML::Node& n, const std::string& what) const {
    if (!n.IsMap()) fail(n, what + " must be a mapping of 'key: value' pairs, not " + kind(n));
  }

  // Checks every key of a mapping: a plain scalar, not repeated, and one of `valid`.
  // Returns the (key, value) pairs in file order.
  std::vector<std::pair<std::string, YAML::Node>> keys(const YAML::Node& map, const std::string& where,
                                                       const std::vector<std::string>& valid) const {
    std::vector<std::pair<std::string, YAML::Node>> out;
    std::map<std::string, SourceLoc> seen;
    for (auto it = map.begin(); it != map.end(); ++it) {
      const YAML::Node k = it->first;
      if (!k.IsScalar()) fail(k, where + ": keys must be plain names");
      const std::string name = k.Scalar();
      if (auto s = seen.find(name); s != seen.end())
        fail(k, where + ": duplicate key '" + name + "' (first given at line " + std::to_string(s->second.line) +
                    "); keep only one");
      seen[name] = loc_of(k);
      if (std::find(valid.begin(), valid.end(), name) == valid.end()) {
        if (valid.empty()) fail(k, where + ": unexpected key '" + name + "'");
        fail(k, where + ": unknown key '" + name + "'; did you mean '" + nearest(name, valid) + "'? (valid: " + join(valid) + ")");
      }
      // yaml-cpp marks an empty value ("vel:" at the end of a line) where the next token starts,
      // often on the next line; point at the key instead. No value of format 1 may be empty.
      if (it->second.IsNull())
        fail(k, where + ": '" + name + "' has no value; write one after the ':'");
      out.emplace_back(name, it->second);
    }
    return out;
  }

  // yaml-cpp 0.7 accepts a quoted scalar that is never closed: it swallows the rest of the file,
  // and the error would be a confusing "'rig' is missing". After an error, every quoted scalar of
  // the document must have its closing quote in the text, else that is the error reported.
  void check_quotes_closed() const {
    if (root_) check_quotes_closed(*root_, 0);
  }
  void check_quotes_closed(const YAML::Node& n, int depth) const {
    if (depth > 64) return;
    if (n.IsScalar()) {
      const YAML::Mark m = n.Mark();
      if (m.pos < 0 || std::size_t(m.pos) >= text_.size()) return;
      const char q = text_[std::size_t(m.pos)];
      if (q != '"' && q != '\'') return;
      for (std::size_t i = std::size_t(m.pos) + 1; i < text_.size(); ++i) {
        if (q == '"' && text_[i] == '\\') { ++i; continue; }
        if (text_[i] != q) continue;
        if (q == '\'' && i + 1 < text_.size() && text_[i + 1] == '\'') { ++i; continue; }
        return;
      }
      fail(loc_of(n), std::string("a quoted text is never closed: add the closing ") + (q == '"' ? "\"" : "'") +
                          " (it swallows the rest of the file)");
    }
    if (n.IsMap())
      for (auto it = n.begin(); it != n.end(); ++it) {
        check_quotes_closed(it->first, depth + 1);
        check_quotes_closed(it->second, depth + 1);
      }
    if (n.IsSequence())
      for (std::size_t i = 0; i < n.size(); ++i) check_quotes_closed(n[i], depth + 1);
  }

  // Whether line `line` (1-based) of the text is indented with a tab (YAML forbids tabs there).
  bool leading_tab(int line) const {
    std::size_t pos = 0;
    for (int k = 1; k < line && pos != std::string_view::npos; ++k) {
      pos = text_.find('\n', pos);
      if (pos != std::string_view::npos) ++pos;
    }
    for (; pos != std::string_view::npos && pos < text_.size(); ++pos) {
      if (text_[pos] == '\t') return true;
      if (text_[pos] != ' ') return false;
    }
    return false;
  }

  // Where an empty list entry ("-" with nothing after it) is: yaml-cpp marks it at the next token,
  // so walk back from there over blanks and comments to its '-'. Falls back to the mark.
  SourceLoc null_item_loc(const YAML::Node& n) const {
    const YAML::Mark m = n.Mark();
    if (m.pos < 0 || std::size_t(m.pos) > text_.size()) return loc_of(n);
    std::size_t i = std::size_t(m.pos);
    while (i > 0) {
      const char c = text_[i - 1];
      if (c == ' ' || c == '\t' || c == '\n' || c == '\r') { --i; continue; }
      // Inside a comment? Then continue from the '#' that starts it.
      const std::size_t line_start = text_.rfind('\n', i - 1) == std::string_view::npos ? 0 : text_.rfind('\n', i - 1) + 1;
      const std::size_t hash = text_.find('#', line_start);
      if (hash != std::string_view::npos && hash < i - 1) { i = hash; continue; }
      break;
    }
    if (i == 0 || text_[i - 1] != '-') return loc_of(n);
    const std::size_t at = i - 1;
    const std::size_t nl = at == 0 ? std::string_view::npos : text_.rfind('\n', at - 1);
    const int line = int(std::count(text_.begin(), text_.begin() + std::ptrdiff_t(at), '\n')) + 1;
    const int col = int(at - (nl == std::string_view::npos ? 0 : nl + 1)) + 1;
    return {line, col};
  }

  double number(const YAML::Node& n, const std::string& what) const {
    if (!n.IsScalar()) fail(n, what + " must be a number, not " + kind(n));
    if (n.Tag() == "!") fail(n, what + " must be a number, not the quoted text \"" + n.Scalar() + "\"");
    std::string s = n.Scalar();
    std::string lower = s;
    std::transform(lower.begin(), lower.end(), lower.begin(), [](unsigned char c) { return char(std::tolower(c)); });
    if (lower.find("inf") != std::string::npos || lower.find("nan") != std::string::npos)
      fail(n, what + " must be a finite number, not '" + s + "'");
    const char* b = s.data();
    const char* e = s.data() + s.size();
    if (b != e && *b == '+') ++b;
    double v = 0.0;
    const auto [ptr, ec] = std::from_chars(b, e, v);
    if (ec == std::errc::result_out_of_range)
      fail(n, what + " is out of the range of numbers c2path handles: '" + s + "'");
    if (ec != std::errc() || ptr != e || b == e) fail(n, what + " must be a number, not '" + s + "'");
    if (!std::isfinite(v)) fail(n, what + " must be a finite number, not '" + s + "'");
    if (std::abs(v) > kMaxMagnitude)
      fail(n, what + " is " + s + ", beyond the largest magnitude c2path accepts (1e12); check the units");
    return v;
  }

  bool boolean(const YAML::Node& n, const std::string& what) const {
    if (n.IsScalar() && n.Tag() != "!") {
      const std::string& s = n.Scalar();
      if (s == "true" || s == "True" || s == "TRUE") return true;
      if (s == "false" || s == "False" || s == "FALSE") return false;
    }
    fail(n, what + " must be true or false");
  }

  std::string text(const YAML::Node& n, const std::string& what) const {
    if (!n.IsScalar()) fail(n, what + " must be text, not " + kind(n));
    if (n.Scalar().size() > 4096) fail(n, what + " is longer than 4096 characters");
    return n.Scalar();
  }

  template <class E>
  E choice(const YAML::Node& n, const std::string& what, const std::vector<std::pair<std::string, E>>& options) const {
    const std::string s = text(n, what);
    std::vector<std::string> names;
    for (const auto& [name, val] : options) {
      if (name == s) return val;
      names.push_back(name);
    }
    fail(n, what + " '" + s + "' is not known; did you mean '" + nearest(s, names) + "'? (valid: " + join(names) + ")");
  }

  static bool is_identifier(const std::string& s) {
    if (s.empty() || !(std::isalpha(static_cast<unsigned char>(s[0])) || s[0] == '_')) return false;
    return std::all_of(s.begin(), s.end(), [](unsigned char c) { return std::isalnum(c) || c == '_'; });
  }

  Scene load(std::string_view text_in) {
    text_ = text_in;
    Scene scene;
    scene.file = file_;
    if (text_in.size() > kMaxSceneBytes)
      fail(SourceLoc{1, 1}, "the file is larger than " + std::to_string(kMaxSceneBytes >> 20) + " MiB; this is not a scene");
    if (text_in.find('\0') != std::string_view::npos) {
      const auto pos = text_in.find('\0');
      const auto line = std::count(text_in.begin(), text_in.begin() + std::ptrdiff_t(pos), '\n') + 1;
      fail(SourceLoc{int(line), 1}, "the file contains a NUL byte; a scene is YAML text");
    }
    std::vector<YAML::Node> docs;
    try {
      // At most three documents are looked at: a second one is an error, and a start that does
      // not move on from the previous one is the parser stuck on a stray token (see DocumentStarts).
      const std::string yaml_text(text_in);
      std::istringstream in(yaml_text);
      YAML::Parser parser(in);
      DocumentStarts ds(file_);
      while (ds.starts.size() < 3 && parser.HandleNextDocument(ds)) {
        const std::size_t k = ds.starts.size();
        if (k >= 2 && ds.starts[k - 1].pos == ds.starts[k - 2].pos) {
          const YAML::Mark m = ds.starts[k - 1];
          const std::size_t pos = std::size_t(std::max(m.pos, 0));
          const std::string what = pos < yaml_text.size() ? "'" + std::string(1, yaml_text[pos]) + "'" : "end of file";
          fail(SourceLoc{m.line + 1, m.column + 1}, "YAML syntax: unexpected " + what +
                                                        " (a ',' belongs inside [ ] or { }; quote text that contains one)");
        }
      }
      if (ds.starts.size() > 1) {
        const YAML::Mark m = ds.starts[1];
        fail(SourceLoc{m.line + 1, m.column + 1}, "the file holds more than one YAML document; a scene is a single document");
      }
      docs.push_back(YAML::Load(yaml_text));
    } catch (const YAML::DeepRecursion& e) {
      // yaml-cpp's own guard against stack exhaustion (its message reads "bad file").
      fail(SourceLoc{e.mark.line >= 0 ? e.mark.line + 1 : 1, e.mark.column >= 0 ? e.mark.column + 1 : 1},
           "YAML syntax: nested too deeply (a scene needs only a few levels of lists and mappings)");
    } catch (const YAML::Exception& e) {
      SourceLoc l{e.mark.line >= 0 ? e.mark.line + 1 : 1, e.mark.column >= 0 ? e.mark.column + 1 : 1};
      fail(l, "YAML syntax: " + e.msg + (leading_tab(l.line) ? "; indent with spaces, not tabs" : yaml_hint(e.msg)));
    }
    if (docs.empty() || docs[0].IsNull())
      fail(SourceLoc{1, 1}, "the scene is empty; it needs at least 'format: 1', 'rig' and 'waypoints'");
    if (docs.size() > 1) fail(docs[1], "the file holds more than one YAML document; a scene is a single document");
    const YAML::Node root = docs[0];
    root_ = root;
    expect_map(root, "the scene");
    const auto top = keys(root, "scene", {"format", "name", "rig", "path", "timing", "waypoints", "export"});
    auto find = [&](const std::string& k) -> std::optional<YAML::Node> {
      for (const auto& [name, v] : top)
        if (name == k) return v;
      return std::nullopt;
    };
    const auto fmt = find("format");
    if (!fmt) fail(loc_of(root), "'format' is missing: add 'format: 1' at the top of the scene");
    {
      const double f = number(*fmt, "'format'");
      if (f != 1.0) fail(*fmt, "unsupported format " + fmt->Scalar() + ": this c2path reads format 1");
      scene.format = 1;
    }
    if (auto n = find("name")) scene.name = text(*n, "'name'");
    const auto rig = find("rig");
    if (!rig) fail(loc_of(root), "'rig' is missing: describe the axes under rig: axes:");
    load_rig(*rig, scene);
    if (auto p = find("path")) load_path(*p, scene);
    if (auto t = find("timing")) load_timing(*t, scene);
    const auto wps = find("waypoints");
    if (!wps) fail(loc_of(root), "'waypoints' is missing: list at least 2 waypoints");
    load_waypoints(*wps, scene);
    if (auto e = find("export")) {
      expect_map(*e, "'export'");
      for (const auto& [k, v] : keys(*e, "export", {"rate"})) {
        if (k == "rate") {
          scene.exports.rate_hz = number(v, "export: 'rate'");
          scene.exports.rate_loc = loc_of(v);
          if (!(*scene.exports.rate_hz > 0.0)) fail(v, "export: 'rate' must be greater than 0 Hz");
          if (*scene.exports.rate_hz > 1e7) fail(v, "export: 'rate' must be at most 10 MHz (1e7 Hz)");
        }
      }
    }
    validate_scene(scene);
    return scene;
  }

  void load_rig(const YAML::Node& rig, Scene& scene) {
    expect_map(rig, "'rig'");
    const auto ks = keys(rig, "rig", {"axes"});
    if (ks.empty()) fail(rig, "rig: 'axes' is missing");
    const YAML::Node axes = ks[0].second;
    if (!axes.IsSequence() || axes.size() == 0)
      fail(axes, "rig: 'axes' must be a list of axes, e.g. - {name: pan, unit: deg, vel: 60}");
    if (axes.size() > kMaxAxes) fail(axes, "rig: more than " + std::to_string(kMaxAxes) + " axes");
    for (std::size_t i = 0; i < axes.size(); ++i) {
      const YAML::Node a = axes[i];
      if (a.IsNull()) fail(null_item_loc(a), "axis " + std::to_string(i + 1) + " is empty; describe it, e.g. {name: pan, unit: deg}");
      const std::string where = "axis " + std::to_string(i + 1);
      expect_map(a, where);
      AxisSpec ax;
      ax.loc = loc_of(a);
      bool named = false;
      for (const auto& [k, v] : keys(a, where, {"name", "unit", "min", "max", "vel", "acc", "jerk", "counts_per_unit", "offset"})) {
        if (k == "name") {
          ax.name = text(v, where + ": 'name'");
          named = true;
          if (!is_identifier(ax.name))
            fail(v, where + ": name '" + ax.name + "' must be an identifier (letters, digits, _; not starting with a digit)");
          if (ax.name == "t" || ax.name == "hold" || ax.name == "stop")
            fail(v, where + ": '" + ax.name + "' is a waypoint key and cannot name an axis");
          if (scene.axis_index(ax.name) >= 0) fail(v, where + ": another axis is already called '" + ax.name + "'");
        } else if (k == "unit") {
          ax.unit = text(v, where + ": 'unit'");
        } else {
          const double x = number(v, where + ": '" + k + "'");
          if (k == "min") ax.min = x;
          if (k == "max") ax.max = x;
          if (k == "vel") ax.vel = x;
          if (k == "acc") ax.acc = x;
          if (k == "jerk") ax.jerk = x;
          if (k == "offset") ax.offset = x;
          if (k == "counts_per_unit") {
            if (x == 0.0) fail(v, where + ": 'counts_per_unit' must not be 0 (negative reverses the axis)");
            ax.counts_per_unit = x;
            ax.counts_loc = loc_of(v);
          }
          if ((k == "vel" || k == "acc" || k == "jerk") && !(x > 0.0))
            fail(v, where + ": '" + k + "' must be greater than 0 (omit it to leave it unchecked)");
          if ((k == "vel" || k == "acc" || k == "jerk") && x < kMinLimit)
            fail(v, where + ": '" + k + "' is " + v.Scalar() + ", below the smallest limit c2path accepts (1e-9); check the units");
        }
      }
      if (!named) fail(a, where + ": 'name' is missing");
      if (ax.min && ax.max && !(*ax.min < *ax.max))
        fail(a["max"], where + " ('" + ax.name + "'): max must be above min (min " + a["min"].Scalar() + ", max " +
                           a["max"].Scalar() + ")");
      scene.axes.push_back(std::move(ax));
    }
  }

  std::vector<std::string> axis_names(const Scene& s) const {
    std::vector<std::string> v;
    for (const auto& a : s.axes) v.push_back(a.name);
    return v;
  }

  Eigen::VectorXd per_axis(const YAML::Node& n, const Scene& s, const std::string& what, double fill, bool need_all) const {
    expect_map(n, what);
    Eigen::VectorXd v = Eigen::VectorXd::Constant(Index(s.axes.size()), fill);
    std::vector<bool> given(s.axes.size(), false);
    for (const auto& [k, val] : keys(n, what, axis_names(s))) {
      const int a = s.axis_index(k);
      v[a] = number(val, what + ": '" + k + "'");
      given[std::size_t(a)] = true;
    }
    if (need_all)
      for (std::size_t a = 0; a < s.axes.size(); ++a)
        if (!given[a]) fail(n, what + ": '" + s.axes[a].name + "' is missing (give a value for every axis)");
    return v;
  }

  void load_path(const YAML::Node& p, Scene& scene) {
    expect_map(p, "'path'");
    scene.path.loc = loc_of(p);
    for (const auto& [k, v] : keys(p, "path", {"knots", "ends", "start", "end", "weights"})) {
      if (k == "knots")
        scene.path.knots = choice<KnotType>(v, "path: knots", {{"chord", KnotType::kChord},
                                                                {"centripetal", KnotType::kCentripetal},
                                                                {"uniform", KnotType::kUniform}});
      if (k == "ends") {
        scene.path.ends = choice<EndCondition>(v, "path: ends", {{"not-a-knot", EndCondition::kNotAKnot},
                                                                 {"natural", EndCondition::kNatural},
                                                                 {"clamped", EndCondition::kClamped},
                                                                 {"periodic", EndCondition::kPeriodic}});
        scene.path.ends_loc = loc_of(v);
      }
      if (k == "start") {
        scene.path.start = per_axis(v, scene, "path: start", 0.0, false);
        scene.path.start_loc = loc_of(v);
      }
      if (k == "end") {
        scene.path.end = per_axis(v, scene, "path: end", 0.0, false);
        scene.path.end_loc = loc_of(v);
      }
      if (k == "weights") {
        scene.path.weights = per_axis(v, scene, "path: weights", 0.0, true);
        scene.path.weights_loc = loc_of(v);
        for (Index a = 0; a < scene.path.weights->size(); ++a)
          if ((*scene.path.weights)[a] < 0.0) fail(v, "path: weights must be 0 or more");
      }
    }
  }

  void load_timing(const YAML::Node& t, Scene& scene) {
    expect_map(t, "'timing'");
    scene.timing.loc = loc_of(t);
    for (const auto& [k, v] : keys(t, "timing", {"mode", "duration", "scale"})) {
      if (k == "mode") {
        scene.timing.mode = choice<TimingMode>(v, "timing: mode", {{"keyframes", TimingMode::kKeyframes},
                                                                  {"duration", TimingMode::kDuration},
                                                                  {"fastest", TimingMode::kFastest}});
        scene.timing.mode_loc = loc_of(v);
      }
      if (k == "duration") {
        scene.timing.duration_s = number(v, "timing: 'duration'");
        scene.timing.duration_loc = loc_of(v);
        if (!(*scene.timing.duration_s > 0.0)) fail(v, "timing: 'duration' must be greater than 0 seconds");
      }
      if (k == "scale") {
        scene.timing.scale = number(v, "timing: 'scale'");
        scene.timing.scale_loc = loc_of(v);
        if (!(scene.timing.scale > 0.0 && scene.timing.scale <= 1.0))
          fail(v, "timing: 'scale' must be greater than 0 and at most 1 (a fraction of every limit)");
      }
    }
  }

  void load_waypoints(const YAML::Node& wps, Scene& scene) {
    if (!wps.IsSequence()) fail(wps, "'waypoints' must be a list, e.g. - {t: 0, " + scene.axes[0].name + ": 0}");
    if (wps.size() > kMaxWaypoints)
      fail(wps, "more than " + std::to_string(kMaxWaypoints) + " waypoints; split the move");
    if (wps.size() < 2)
      fail(wps, "a move needs at least 2 waypoints, the scene has " + std::to_string(wps.size()));
    std::vector<std::string> valid = {"t", "hold", "stop"};
    for (const auto& a : scene.axes) valid.push_back(a.name);
    scene.waypoints.reserve(wps.size());
    const std::size_t m = scene.axes.size();
    for (std::size_t k = 0; k < wps.size(); ++k) {
      const YAML::Node w = wps[k];
      if (w.IsNull()) fail(null_item_loc(w), "waypoint " + std::to_string(k + 1) + " is empty; give its t and every axis");
      const std::string where = "waypoint " + std::to_string(k + 1);
      expect_map(w, where);
      Waypoint wp;
      wp.loc = loc_of(w);
      wp.q.assign(m, 0.0);
      wp.q_loc.assign(m, SourceLoc{});
      std::vector<bool> given(m, false);
      for (const auto& [key, v] : keys(w, where, valid)) {
        if (key == "t") {
          wp.t = number(v, where + ": 't'");
          wp.t_loc = loc_of(v);
        } else if (key == "hold") {
          wp.hold_s = number(v, where + ": 'hold'");
          wp.hold_loc = loc_of(v);
          if (wp.hold_s < 0.0) fail(v, where + ": 'hold' must be 0 or more seconds");
        } else if (key == "stop") {
          wp.stop = boolean(v, where + ": 'stop'");
          wp.stop_loc = loc_of(v);
        } else {
          const int a = scene.axis_index(key);
          wp.q[std::size_t(a)] = number(v, where + ": '" + key + "'");
          wp.q_loc[std::size_t(a)] = loc_of(v);
          given[std::size_t(a)] = true;
        }
      }
      for (std::size_t a = 0; a < m; ++a)
        if (!given[a]) fail(w, where + ": '" + scene.axes[a].name + "' is missing (every waypoint gives every axis)");
      scene.waypoints.push_back(std::move(wp));
    }
  }

 private:
  std::string file_;
  std::string_view text_;  // the text being loaded (for null_item_loc)
  std::optional<YAML::Node> root_;  // the parsed document, once there is one
};

void put_number(std::string& out, double v) {
  char buf[32];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  out.append(buf, r.ptr);
}

std::string quoted(const std::string& s) {
  std::string out = "\"";
  for (char c : s) {
    if (c == '"' || c == '\\') out += '\\';
    if (c == '\n') { out += "\\n"; continue; }
    out += c;
  }
  return out + "\"";
}

}  // namespace

Scene load_scene_text(std::string_view text, const std::string& file) {
  Loader loader(file);
  try {
    return loader.load(text);
  } catch (const Error&) {
    loader.check_quotes_closed();  // the root cause of many a confusing error; costs nothing on success
    throw;
  }
}

Scene load_scene_file(const std::string& path) {
  std::string data;
  std::string name = path;
  if (path == "-") {
    name = "<stdin>";
    // Read at most one byte past the cap: an endless stream must not fill the memory.
    char chunk[65536];
    while (data.size() <= kMaxSceneBytes && std::cin.read(chunk, sizeof chunk).gcount() > 0)
      data.append(chunk, std::size_t(std::cin.gcount()));
    if (data.size() > kMaxSceneBytes) throw Error(name, SourceLoc{1, 1}, "the input is larger than 64 MiB; this is not a scene");
  } else {
    std::error_code dir_ec;
    if (std::filesystem::is_directory(path, dir_ec))
      throw Error(path, SourceLoc{}, "is a directory, not a scene file; give the path of a .yaml scene");
    std::ifstream in(path, std::ios::binary);
    if (!in) throw Error(path, SourceLoc{}, "cannot open the scene file (check the path)");
    in.seekg(0, std::ios::end);
    const auto size = in.tellg();
    if (size < 0) throw Error(path, SourceLoc{}, "cannot read the scene file (is it a directory?)");
    if (std::size_t(size) > kMaxSceneBytes) throw Error(path, SourceLoc{1, 1}, "the file is larger than 64 MiB; this is not a scene");
    in.seekg(0);
    data.resize(std::size_t(size));
    if (size > 0 && !in.read(data.data(), size)) throw Error(path, SourceLoc{}, "cannot read the scene file");
  }
  return load_scene_text(data, name);
}

std::string scene_to_yaml(const Scene& s) {
  std::string o;
  o += "format: 1\n";
  if (!s.name.empty()) o += "name: " + quoted(s.name) + "\n";
  o += "rig:\n  axes:\n";
  for (const auto& a : s.axes) {
    o += "    - {name: " + a.name;
    if (!a.unit.empty()) o += ", unit: " + quoted(a.unit);
    const std::pair<const char*, const std::optional<double>*> fields[] = {
        {"min", &a.min}, {"max", &a.max}, {"vel", &a.vel}, {"acc", &a.acc}, {"jerk", &a.jerk},
        {"counts_per_unit", &a.counts_per_unit}, {"offset", &a.offset}};
    for (const auto& [k, v] : fields)
      if (*v) {
        o += std::string(", ") + k + ": ";
        put_number(o, **v);
      }
    o += "}\n";
  }
  o += "path:\n";
  o += std::string("  knots: ") + to_string(s.path.knots) + "\n";
  o += std::string("  ends: ") + to_string(s.path.ends) + "\n";
  auto axis_map = [&](const char* key, const Eigen::VectorXd& v) {
    o += std::string("  ") + key + ": {";
    for (std::size_t a = 0; a < s.axes.size(); ++a) {
      o += (a ? ", " : "") + s.axes[a].name + ": ";
      put_number(o, v[Index(a)]);
    }
    o += "}\n";
  };
  if (s.path.start) axis_map("start", *s.path.start);
  if (s.path.end) axis_map("end", *s.path.end);
  if (s.path.weights) axis_map("weights", *s.path.weights);
  o += "timing:\n";
  o += std::string("  mode: ") + to_string(s.timing.mode) + "\n";
  if (s.timing.duration_s) {
    o += "  duration: ";
    put_number(o, *s.timing.duration_s);
    o += "\n";
  }
  if (s.timing.scale != 1.0) {
    o += "  scale: ";
    put_number(o, s.timing.scale);
    o += "\n";
  }
  o += "waypoints:\n";
  for (const auto& w : s.waypoints) {
    o += "  - {";
    bool first = true;
    if (w.t) {
      o += "t: ";
      put_number(o, *w.t);
      first = false;
    }
    for (std::size_t a = 0; a < s.axes.size(); ++a) {
      o += (first ? "" : ", ") + s.axes[a].name + ": ";
      put_number(o, w.q[a]);
      first = false;
    }
    if (w.hold_s > 0.0) {
      o += ", hold: ";
      put_number(o, w.hold_s);
    }
    if (w.stop) o += ", stop: true";
    o += "}\n";
  }
  if (s.exports.rate_hz) {
    o += "export:\n  rate: ";
    put_number(o, *s.exports.rate_hz);
    o += "\n";
  }
  return o;
}

void save_scene_file(const Scene& scene, const std::string& path) {
  const std::string text = scene_to_yaml(scene);
  detail::AtomicFile f(path);
  f.write(text);
  f.commit();
}

}  // namespace c2path
