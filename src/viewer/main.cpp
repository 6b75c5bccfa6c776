// c2path-view: the interactive viewer (GLFW + OpenGL 3.3 core + Dear ImGui).
//
//   c2path-view SCENE [--screenshot FILE.png] [--frames N] [--size WxH] [--time T] [--tab NAME]
//                     [--colour limit|speed] [--timing] [--check-pixels]
//
// Headless use (tests, documentation): --screenshot renders N frames (default 3), writes the
// last one as PNG and exits; --check-pixels then verifies the PNG shows a path and plots.

#define GLFW_INCLUDE_NONE
#include <GL/gl.h>
#include <GLFW/glfw3.h>
#include <backends/imgui_impl_glfw.h>
#include <backends/imgui_impl_opengl3.h>
#include <imgui.h>
#include <stb_image.h>
#include <stb_image_write.h>

#include <malloc.h>
#include <time.h>

#include <algorithm>
#include <cfloat>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <string>
#include <thread>
#include <unordered_map>
#include <vector>

#include "app.hpp"
#include "document.hpp"
#include "present.hpp"
#include "selftest.hpp"
#include "style.hpp"

namespace {

using namespace c2path::viewer;

bool g_initialised = false;
std::string g_init_error;

void glfw_error(int code, const char* what) {
  if (!g_initialised) {  // reported in one line by main()
    g_init_error = what ? what : "unknown";
    return;
  }
  std::fprintf(stderr, "c2path-view: GLFW error %d: %s\n", code, what ? what : "");
}

struct Args {
  std::string scene, screenshot, tab, colour = "limit", same_as;
  int frames = -1, width = 1280, height = 800;
  double time_s = -1.0;
  bool timing = false, full_redraw = false, check_pixels = false, edit_each_frame = false, selftest_ui = false, spin = false;
};

const char* kUsage =
    "usage: c2path-view SCENE [options]\n"
    "  opens the scene in the viewer: 3D path, profiles, waypoint table, limit report\n"
    "options:\n"
    "  --screenshot FILE.png  render, write the last frame as PNG and exit (headless use)\n"
    "  --frames N             frames to render before exiting (default with --screenshot: 3)\n"
    "  --size WxH             window size in pixels (default 1280x800)\n"
    "  --time T               playhead at T seconds at start\n"
    "  --tab NAME             side panel tab: waypoints, report, view\n"
    "  --colour limit|speed   what the path is coloured by\n"
    "  --timing               print mean and max frame time at exit\n"
    "  --check-pixels         with --screenshot: fail (exit 3) unless the PNG shows a path and plots\n"
    "  --selftest-ui          with --screenshot: script mouse and keys (drag, undo, scrub, play, add, delete,\n"
    "                         Escape during a drag, save over FILE.png.saved.yaml)\n"
    "  --same-as REF.png      with --screenshot: fail (exit 5) unless the PNG has exactly the pixels of REF.png\n"
    "  --full-redraw          draw every pixel every frame (default: only what changed since the last frame)\n"
    "  --spin                 measurement: orbit the 3D view and play, every frame\n"
    "  --edit-each-frame      measurement: move the middle waypoint a little every frame, as a drag does,\n"
    "                         frames paced at 60 Hz (planning runs in the background meanwhile)\n"
    "  --help, --version\n";

int usage_error(const std::string& msg) {
  std::fprintf(stderr, "c2path-view: error: %s (see c2path-view --help)\n", msg.c_str());
  return 2;
}

/// Verifies the written PNG: the 3D canvas has path pixels (the path ramp is the only strongly
/// coloured thing drawn there) and the plot grid is not one colour.
bool check_pixels(const std::string& file, const Rect& view, const Rect& plots, float sx, float sy) {
  int w = 0, h = 0, n = 0;
  unsigned char* img = stbi_load(file.c_str(), &w, &h, &n, 3);
  if (!img) {
    std::fprintf(stderr, "c2path-view: pixel check: cannot read %s back\n", file.c_str());
    return false;
  }
  auto region = [&](const Rect& r, auto&& fn) {
    const int x0 = std::clamp(int(r.min.x * sx), 0, w), x1 = std::clamp(int(r.max.x * sx), 0, w);
    const int y0 = std::clamp(int(r.min.y * sy), 0, h), y1 = std::clamp(int(r.max.y * sy), 0, h);
    for (int y = y0; y < y1; ++y)
      for (int x = x0; x < x1; ++x) {
        const unsigned char* p = img + (std::size_t(y) * std::size_t(w) + std::size_t(x)) * 3;
        fn(p[0], p[1], p[2]);
      }
  };
  auto chroma = [](int r, int g, int b) { return std::max({r, g, b}) - std::min({r, g, b}); };
  long path_px = 0, view_px = 0;
  region(view, [&](int r, int g, int b) {
    ++view_px;
    if (chroma(r, g, b) >= 60) ++path_px;
  });
  std::unordered_map<unsigned, long> hist;
  long plot_px = 0, curve_px = 0;
  region(plots, [&](int r, int g, int b) {
    ++plot_px;
    ++hist[unsigned(r) << 16 | unsigned(g) << 8 | unsigned(b)];
    if (chroma(r, g, b) >= 60) ++curve_px;
  });
  stbi_image_free(img);
  long dominant = 0;
  for (const auto& [c, k] : hist) dominant = std::max(dominant, k);
  const double other = plot_px > 0 ? double(plot_px - dominant) / double(plot_px) : 0.0;
  bool ok = true;
  if (view_px == 0 || path_px < 150) {
    std::fprintf(stderr, "c2path-view: pixel check failed: the 3D view has %ld path pixels of %ld (want >= 150)\n", path_px, view_px);
    ok = false;
  }
  if (plot_px == 0 || hist.size() < 4 || other < 0.01 || curve_px < 100) {
    std::fprintf(stderr,
                 "c2path-view: pixel check failed: the plot area has %zu colours, %.2f%% off the background, %ld curve "
                 "pixels\n",
                 hist.size(), 100.0 * other, curve_px);
    ok = false;
  }
  if (ok)
    std::printf("pixel check ok: 3D view %ld path pixels of %ld; plots %zu colours, %.1f%% off the background, %ld curve pixels\n",
                path_px, view_px, hist.size(), 100.0 * other, curve_px);
  return ok;
}

/// True when two PNG files hold the same pixels; otherwise says how many differ and where.
bool same_pixels(const std::string& file, const std::string& ref) {
  int w = 0, h = 0, n = 0, rw = 0, rh = 0, rn = 0;
  unsigned char* a = stbi_load(file.c_str(), &w, &h, &n, 3);
  unsigned char* b = stbi_load(ref.c_str(), &rw, &rh, &rn, 3);
  bool ok = a && b && w == rw && h == rh;
  if (!ok) std::fprintf(stderr, "c2path-view: pixel comparison: cannot read both %s and %s at the same size\n", file.c_str(), ref.c_str());
  if (ok) {
    long differ = 0;
    int x0 = w, y0 = h, x1 = -1, y1 = -1;
    for (int y = 0; y < h; ++y)
      for (int x = 0; x < w; ++x) {
        const std::size_t i = (std::size_t(y) * std::size_t(w) + std::size_t(x)) * 3;
        if (std::memcmp(a + i, b + i, 3) != 0) {
          ++differ;
          x0 = std::min(x0, x);
          y0 = std::min(y0, y);
          x1 = std::max(x1, x);
          y1 = std::max(y1, y);
        }
      }
    ok = differ == 0;
    if (ok) std::printf("pixels the same as %s\n", ref.c_str());
    else
      std::fprintf(stderr, "c2path-view: %ld pixels differ from %s, within x %d..%d, y %d..%d\n", differ, ref.c_str(), x0, x1, y0, y1);
  }
  if (a) stbi_image_free(a);
  if (b) stbi_image_free(b);
  return ok;
}

}  // namespace

int main(int argc, char** argv) {
  Args a;
  for (int i = 1; i < argc; ++i) {
    const std::string s = argv[i];
    auto value = [&](const char* name) -> const char* {
      if (i + 1 >= argc) return nullptr;
      (void)name;
      return argv[++i];
    };
    if (s == "--help" || s == "-h") {
      std::fputs(kUsage, stdout);
      return 0;
    } else if (s == "--version") {
      std::printf("c2path-view %s\n", C2PATH_VERSION);
      return 0;
    } else if (s == "--screenshot") {
      const char* v = value("--screenshot");
      if (!v) return usage_error("--screenshot needs a file name");
      a.screenshot = v;
    } else if (s == "--frames") {
      const char* v = value("--frames");
      char* end = nullptr;
      const long n = v ? std::strtol(v, &end, 10) : 0;
      if (!v || *end || n < 1 || n > 1000000) return usage_error("--frames needs a count from 1 to 1000000");
      a.frames = int(n);
    } else if (s == "--size") {
      const char* v = value("--size");
      int w = 0, h = 0;
      char extra = 0;
      if (!v || std::sscanf(v, "%dx%d%c", &w, &h, &extra) != 2 || w < 320 || h < 240 || w > 8192 || h > 8192)
        return usage_error("--size needs WxH, e.g. 1280x800 (320x240 .. 8192x8192)");
      a.width = w;
      a.height = h;
    } else if (s == "--time") {
      const char* v = value("--time");
      char* end = nullptr;
      const double t = v ? std::strtod(v, &end) : 0;
      if (!v || *end || !(t >= 0)) return usage_error("--time needs a number of seconds >= 0");
      a.time_s = t;
    } else if (s == "--tab") {
      const char* v = value("--tab");
      if (!v || (std::strcmp(v, "waypoints") && std::strcmp(v, "report") && std::strcmp(v, "view")))
        return usage_error("--tab needs waypoints, report or view");
      a.tab = v;
    } else if (s == "--colour" || s == "--color") {
      const char* v = value("--colour");
      if (!v || (std::strcmp(v, "limit") && std::strcmp(v, "speed"))) return usage_error("--colour needs limit or speed");
      a.colour = v;
    } else if (s == "--timing") {
      a.timing = true;
    } else if (s == "--same-as") {
      const char* v = value("--same-as");
      if (!v) return usage_error("--same-as needs a PNG file");
      a.same_as = v;
    } else if (s == "--full-redraw") {
      a.full_redraw = true;
    } else if (s == "--spin") {
      a.spin = true;
    } else if (s == "--selftest-ui") {
      a.selftest_ui = true;
    } else if (s == "--edit-each-frame") {
      a.edit_each_frame = true;
    } else if (s == "--check-pixels") {
      a.check_pixels = true;
    } else if (!s.empty() && s[0] == '-' && s != "-") {
      return usage_error("unknown option " + s);
    } else if (a.scene.empty()) {
      a.scene = s;
    } else {
      return usage_error("one scene file only");
    }
  }
  if (a.scene.empty()) return usage_error("a scene file is required");
  if (a.check_pixels && a.screenshot.empty()) return usage_error("--check-pixels needs --screenshot");
  if (!a.same_as.empty() && a.screenshot.empty()) return usage_error("--same-as needs --screenshot");
  const bool headless = !a.screenshot.empty();
  if (a.selftest_ui && !headless) return usage_error("--selftest-ui needs --screenshot");
  if (headless && a.frames < 0) a.frames = 3;
  if (a.selftest_ui) a.frames = std::max(a.frames, UiSelfTest::kFrames);
  UiSelfTest selftest;
  if (a.selftest_ui) selftest.set_save_file(a.screenshot + ".saved.yaml");

  // The software renderer allocates vertex storage of a few MB every frame; keep such blocks in
  // the heap instead of mapping and zeroing fresh pages each time (measured: a third of a frame).
  mallopt(M_MMAP_THRESHOLD, 256 << 20);
  mallopt(M_TRIM_THRESHOLD, 512 << 20);

  glfwSetErrorCallback(glfw_error);
  if (!glfwInit()) {
    std::fprintf(stderr, "c2path-view: no display: cannot open a window (%s); run it in a desktop session, or under xvfb-run\n",
                 g_init_error.c_str());
    return 2;
  }
  g_initialised = true;
  glfwWindowHint(GLFW_CONTEXT_VERSION_MAJOR, 3);
  glfwWindowHint(GLFW_CONTEXT_VERSION_MINOR, 3);
  glfwWindowHint(GLFW_OPENGL_PROFILE, GLFW_OPENGL_CORE_PROFILE);
  glfwWindowHint(GLFW_OPENGL_FORWARD_COMPAT, GLFW_TRUE);
  glfwWindowHint(GLFW_RESIZABLE, headless ? GLFW_FALSE : GLFW_TRUE);
  const std::string title = "c2path-view: " + a.scene;
  GLFWwindow* win = glfwCreateWindow(a.width, a.height, title.c_str(), nullptr, nullptr);
  if (!win) {
    std::fprintf(stderr, "c2path-view: no display: cannot create an OpenGL 3.3 core window\n");
    glfwTerminate();
    return 2;
  }
  glfwMakeContextCurrent(win);
  glfwSwapInterval(headless || a.timing ? 0 : 1);

  IMGUI_CHECKVERSION();
  ImGui::CreateContext();
  ImGuiIO& io = ImGui::GetIO();
  io.IniFilename = nullptr;  // the layout is fixed; nothing to remember
  apply_theme();
  ImGui_ImplGlfw_InitForOpenGL(win, true);
  ImGui_ImplOpenGL3_Init("#version 330 core");

  Document doc;
  if (!doc.load(a.scene)) std::fprintf(stderr, "c2path-view: %s\n", doc.load_error().c_str());
  AppOptions opt;
  opt.tab = a.tab;
  opt.time_s = a.time_s;
  opt.colour = a.colour == "speed" ? ColourBy::kSpeed : ColourBy::kLimitPct;
  opt.headless = headless;
  opt.spin = a.spin;
  App app(doc, opt);

  Presenter presenter;
  presenter.init();
  presenter.set_full(a.full_redraw);
  std::vector<double> redrawn;

  using Clock = std::chrono::steady_clock;
  std::vector<double> frame_ms, ui_ms, cpu_ms, main_ms;
  auto main_now = [] {  // CPU time of this (the UI) thread [ms]: a frame's own work, without waiting
    timespec ts{};
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return double(ts.tv_sec) * 1e3 + double(ts.tv_nsec) * 1e-6;
  };
  auto cpu_now = [] {  // CPU time of the whole process (all threads, llvmpipe's included) [ms]
    timespec ts{};
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return double(ts.tv_sec) * 1e3 + double(ts.tv_nsec) * 1e-6;
  };
  auto last = Clock::now();
  int rc = 0, draw_calls = 0;
  for (int frame = 0; !glfwWindowShouldClose(win); ++frame) {
    if (a.frames > 0 && frame >= a.frames) break;
    if (headless || app.busy() || a.timing) glfwPollEvents();
    else glfwWaitEventsTimeout(0.1);
    if (a.edit_each_frame && frame > 0) {
      // Paced like a drag on a 60 Hz display (headless windows have no vertical sync): frames do
      // not run back to back, so background planning gets the time a real drag leaves it.
      const auto next = last + std::chrono::microseconds(16667);
      if (Clock::now() < next) std::this_thread::sleep_until(next);
    }
    const auto t0 = Clock::now();
    const double c0 = cpu_now(), m0 = main_now();
    if (a.edit_each_frame && frame >= 1 && doc.has_scene() && !doc.scene().waypoints.empty()) {
      // As a drag does (from the second frame: a drag needs a view drawn): one gesture, a new
      // value for one waypoint every frame.
      std::vector<double> q = doc.scene().waypoints[doc.scene().waypoints.size() / 2].q;
      if (!q.empty()) q[0] += (frame % 2 ? 1e-4 : -1e-4);
      app.move_waypoint_live(doc.scene().waypoints.size() / 2, q);
    }
    const double dt = std::chrono::duration<double>(t0 - last).count();
    last = t0;
    ImGui_ImplOpenGL3_NewFrame();
    ImGui_ImplGlfw_NewFrame();
    if (headless) io.MousePos = ImVec2(-FLT_MAX, -FLT_MAX);  // no hover effects in screenshots
    if (a.selftest_ui) selftest.input(frame, io, app, doc);
    ImGui::NewFrame();
    app.frame(headless ? 1.0 / 60.0 : std::min(dt, 0.1));
    if (a.selftest_ui) selftest.check(frame, app, doc);
    const auto t1 = Clock::now();
    ImGui::Render();
    int fw = 0, fh = 0;
    glfwGetFramebufferSize(win, &fw, &fh);
    {  // solid backdrops are scissored clears (cheap) instead of blended quads; only what changed is drawn again
      int ww = 0, wh = 0;
      glfwGetWindowSize(win, &ww, &wh);
      const float bx = ww > 0 ? float(fw) / float(ww) : 1.0f, by = wh > 0 ? float(fh) / float(wh) : 1.0f;
      presenter.render(ImGui::GetDrawData(), app.backdrops(), col::kPanelBg, fw, fh, bx, by);
      redrawn.push_back(presenter.redrawn_fraction());
    }
    if (a.timing) glFinish();
    draw_calls = 0;
    for (int l = 0; l < ImGui::GetDrawData()->CmdListsCount; ++l) draw_calls += ImGui::GetDrawData()->CmdLists[l]->CmdBuffer.Size;
    const auto t2 = Clock::now();
    frame_ms.push_back(std::chrono::duration<double, std::milli>(t2 - t0).count());
    cpu_ms.push_back(cpu_now() - c0);
    main_ms.push_back(main_now() - m0);
    ui_ms.push_back(std::chrono::duration<double, std::milli>(t1 - t0).count());
    app.set_frame_ms(frame_ms.back());
    if (headless && frame + 1 == a.frames) {
      std::vector<unsigned char> px(std::size_t(fw) * std::size_t(fh) * 3);
      glReadBuffer(GL_BACK);
      glPixelStorei(GL_PACK_ALIGNMENT, 1);
      glReadPixels(0, 0, fw, fh, GL_RGB, GL_UNSIGNED_BYTE, px.data());
      stbi_flip_vertically_on_write(1);
      if (!stbi_write_png(a.screenshot.c_str(), fw, fh, 3, px.data(), fw * 3)) {
        std::fprintf(stderr, "c2path-view: error: cannot write %s\n", a.screenshot.c_str());
        rc = 1;
      } else {
        std::printf("wrote %s (%dx%d)\n", a.screenshot.c_str(), fw, fh);
        int ww = 0, wh = 0;
        glfwGetWindowSize(win, &ww, &wh);
        const float sx = ww > 0 ? float(fw) / float(ww) : 1.0f, sy = wh > 0 ? float(fh) / float(wh) : 1.0f;
        if (a.check_pixels && !check_pixels(a.screenshot, app.view_rect(), app.plot_rect(), sx, sy)) rc = 3;
        if (!a.same_as.empty() && !same_pixels(a.screenshot, a.same_as) && rc == 0) rc = 5;
      }
    }
    glfwSwapBuffers(win);
  }
  if (a.selftest_ui) {
    for (const auto& f : selftest.failures()) std::fprintf(stderr, "c2path-view: ui self-test failed: %s\n", f.c_str());
    if (selftest.ok()) std::printf("ui self-test ok: %d checks\n", selftest.checks());
    else rc = 4;
  }
  if (a.timing && !frame_ms.empty()) {
    // The first frames build fonts and sample the plan: reported apart.
    const std::size_t skip = std::min<std::size_t>(frame_ms.size() - 1, 2);
    double sum = 0, mx = 0, usum = 0, csum = 0, rsum = 0, msum = 0, mmax = 0;
    for (std::size_t i = skip; i < frame_ms.size(); ++i) {
      sum += frame_ms[i];
      csum += cpu_ms[i];
      msum += main_ms[i];
      mmax = std::max(mmax, main_ms[i]);
      usum += ui_ms[i];
      rsum += redrawn[i];
      mx = std::max(mx, frame_ms[i]);
    }
    const double k = double(frame_ms.size() - skip);
    std::printf("frame time over %zu frames (first %zu excluded, first %.1f ms): mean %.2f ms, max %.2f ms; UI build mean %.2f ms; "
                "process CPU per frame (all threads) %.2f ms; UI thread CPU per frame mean %.2f ms, max %.2f ms; %.1f%% of the pixels "
                "redrawn per frame; %d vertices, %d draw calls, %s; %llu plans shown after the first\n",
                frame_ms.size() - skip, skip, frame_ms[0], sum / k, mx, usum / k, csum / k, msum / k, mmax, 100.0 * rsum / k,
                io.MetricsRenderVertices,
                draw_calls, app.stats().c_str(), static_cast<unsigned long long>(doc.plans_shown() - 1));
  }
  presenter.release();
  ImGui_ImplOpenGL3_Shutdown();
  ImGui_ImplGlfw_Shutdown();
  ImGui::DestroyContext();
  glfwDestroyWindow(win);
  glfwTerminate();
  return rc;
}
