// Partial redraw into a kept offscreen frame (see present.hpp).

#define GLFW_INCLUDE_NONE
#include "present.hpp"

#include <GL/gl.h>
#include <GL/glext.h>
#include <GLFW/glfw3.h>
#include <backends/imgui_impl_opengl3.h>

#include <algorithm>
#include <cmath>
#include <cstring>

namespace c2path::viewer {

namespace {
PFNGLGENFRAMEBUFFERSPROC p_gen_framebuffers = nullptr;
PFNGLDELETEFRAMEBUFFERSPROC p_delete_framebuffers = nullptr;
PFNGLBINDFRAMEBUFFERPROC p_bind_framebuffer = nullptr;
PFNGLFRAMEBUFFERTEXTURE2DPROC p_framebuffer_texture_2d = nullptr;
PFNGLCHECKFRAMEBUFFERSTATUSPROC p_check_framebuffer_status = nullptr;
PFNGLBLITFRAMEBUFFERPROC p_blit_framebuffer = nullptr;
PFNGLFRAMEBUFFERPARAMETERIPROC p_framebuffer_parameteri = nullptr;
constexpr GLenum kFlipYMesa = 0x8BBB;  // GL_FRAMEBUFFER_FLIP_Y_MESA

template <class F>
bool load(F& f, const char* name) {
  f = reinterpret_cast<F>(glfwGetProcAddress(name));
  return f != nullptr;
}

inline std::uint64_t mix(std::uint64_t h, std::uint64_t v) {
  h ^= v * 0x9e3779b97f4a7c15ull;
  h = (h << 27 | h >> 37) * 0xff51afd7ed558ccdull;
  return h;
}

inline std::uint64_t bits(float f) {
  std::uint32_t u = 0;
  std::memcpy(&u, &f, 4);
  return u;
}

using IRect = Presenter::IRect;

IRect unite(const IRect& a, const IRect& b) {
  return {std::min(a.x0, b.x0), std::min(a.y0, b.y0), std::max(a.x1, b.x1), std::max(a.y1, b.y1)};
}
IRect intersect(const IRect& a, const IRect& b) {
  return {std::max(a.x0, b.x0), std::max(a.y0, b.y0), std::min(a.x1, b.x1), std::min(a.y1, b.y1)};
}
bool same(const IRect& a, const IRect& b) { return a.x0 == b.x0 && a.y0 == b.y0 && a.x1 == b.x1 && a.y1 == b.y1; }

// The scissor box the OpenGL3 backend derives from a clip rectangle (its own arithmetic), as
// [x0, x1) x [y0, y1) in pixels from the top.
IRect backend_scissor(const ImVec4& c, const ImVec2& off, const ImVec2& scale) {
  const ImVec2 mn((c.x - off.x) * scale.x, (c.y - off.y) * scale.y), mx((c.z - off.x) * scale.x, (c.w - off.y) * scale.y);
  if (mx.x <= mn.x || mx.y <= mn.y) return {};
  const int x = int(mn.x), w = int(mx.x - mn.x), h = int(mx.y - mn.y);
  // glScissor(x, int(fb_h - mx.y), w, h): from the top that is [fb_h - int(fb_h - mx.y) - h, ...);
  // with integer fb_h, int(fb_h - mx.y) = fb_h - ceil(mx.y) for mx.y < fb_h.
  const int y1 = int(std::ceil(mx.y));
  return {x, y1 - h, x + w, y1};
}

// A clip rectangle (ImGui coordinates) inside `orig` whose backend scissor lies inside d.
ImVec4 clip_to(const ImVec4& orig, const IRect& d, const ImVec2& off, const ImVec2& scale) {
  ImVec4 c(std::max(orig.x, float(d.x0) / scale.x + off.x), std::max(orig.y, float(d.y0) / scale.y + off.y),
           std::min(orig.z, float(d.x1) / scale.x + off.x), std::min(orig.w, float(d.y1) / scale.y + off.y));
  if (!(c.z > c.x && c.w > c.y)) return ImVec4(0, 0, 0, 0);
  for (int guard = 0; guard < 8; ++guard) {  // rounding: shrink until the scissor is inside d
    const IRect s = backend_scissor(c, off, scale);
    if (s.empty()) return ImVec4(0, 0, 0, 0);
    if (s.x0 >= d.x0 && s.y0 >= d.y0 && s.x1 <= d.x1 && s.y1 <= d.y1) return c;
    if (s.x0 < d.x0) c.x = std::nextafter(c.x, c.z);
    if (s.y0 < d.y0) c.y = std::nextafter(c.y, c.w);
    if (s.x1 > d.x1) c.z = std::nextafter(c.z, c.x);
    if (s.y1 > d.y1) c.w = std::nextafter(c.w, c.y);
  }
  return ImVec4(0, 0, 0, 0);
}
}  // namespace

void Presenter::release() {
  if (fbo_ && p_delete_framebuffers) p_delete_framebuffers(1, &fbo_);
  if (tex_) glDeleteTextures(1, &tex_);
  fbo_ = tex_ = 0;
  ok_ = valid_ = false;
}

bool Presenter::init() {
  ok_ = load(p_gen_framebuffers, "glGenFramebuffers") && load(p_delete_framebuffers, "glDeleteFramebuffers") &&
        load(p_bind_framebuffer, "glBindFramebuffer") && load(p_framebuffer_texture_2d, "glFramebufferTexture2D") &&
        load(p_check_framebuffer_status, "glCheckFramebufferStatus") && load(p_blit_framebuffer, "glBlitFramebuffer");
  // Rows stored top-down like the window's buffer: the copy to the window needs no flip, which
  // lets Mesa copy memory instead of drawing a textured full-screen quad.
  if (!glfwExtensionSupported("GL_MESA_framebuffer_flip_y") || !load(p_framebuffer_parameteri, "glFramebufferParameteri"))
    p_framebuffer_parameteri = nullptr;
  return ok_;
}

std::vector<IRect> Presenter::merge(std::vector<IRect> rects, std::size_t max_rects) {
  rects.erase(std::remove_if(rects.begin(), rects.end(), [](const IRect& r) { return r.empty(); }), rects.end());
  if (rects.size() > 1024) {  // a great many changes: one box
    IRect u = rects[0];
    for (const IRect& r : rects) u = unite(u, r);
    return {u};
  }
  // Join rectangles that overlap or whose union costs little more than the two (close ones), in
  // passes until none joins (the parts of one changed window or curve collapse quickly).
  auto joins = [](const IRect& a, const IRect& b) {
    return !intersect(a, b).empty() || unite(a, b).area() <= a.area() + b.area() + 2048;
  };
  for (bool again = true; again;) {
    again = false;
    for (std::size_t i = 0; i < rects.size(); ++i)
      for (std::size_t j = i + 1; j < rects.size();) {
        if (joins(rects[i], rects[j])) {
          rects[i] = unite(rects[i], rects[j]);
          rects[j] = rects.back();
          rects.pop_back();
          again = true;
        } else {
          ++j;
        }
      }
  }
  while (rects.size() > std::max<std::size_t>(1, max_rects)) {  // then the cheapest unions
    std::size_t bi = 0, bj = 1;
    long best = -1;
    for (std::size_t i = 0; i < rects.size(); ++i)
      for (std::size_t j = i + 1; j < rects.size(); ++j) {
        const long extra = unite(rects[i], rects[j]).area() - rects[i].area() - rects[j].area();
        if (best < 0 || extra < best) { best = extra; bi = i; bj = j; }
      }
    rects[bi] = unite(rects[bi], rects[bj]);
    rects.erase(rects.begin() + long(bj));
  }
  return rects;
}

void Presenter::full_redraw(ImDrawData* dd, const std::vector<App::Backdrop>& backdrops, const float clear[3], int fw, int fh,
                            float bx, float by) {
  glViewport(0, 0, fw, fh);
  glClearColor(clear[0], clear[1], clear[2], 1.0f);
  glClear(GL_COLOR_BUFFER_BIT);
  glEnable(GL_SCISSOR_TEST);
  for (const auto& b : backdrops) {
    const int x0 = int(b.rect.min.x * bx), x1 = int(b.rect.max.x * bx), y0 = int(b.rect.min.y * by), y1 = int(b.rect.max.y * by);
    glScissor(x0, fh - y1, x1 - x0, y1 - y0);
    glClearColor(float(b.colour & 0xff) / 255.0f, float((b.colour >> 8) & 0xff) / 255.0f, float((b.colour >> 16) & 0xff) / 255.0f, 1.0f);
    glClear(GL_COLOR_BUFFER_BIT);
  }
  glDisable(GL_SCISSOR_TEST);
  ImGui_ImplOpenGL3_RenderDrawData(dd);
}

void Presenter::draw_rect(ImDrawData* dd, const IRect& d, const std::vector<Item>& backdrops, const std::vector<ImU32>& bcol,
                          const float clear[3], int fh) {
  glEnable(GL_SCISSOR_TEST);
  glScissor(d.x0, fh - d.y1, d.x1 - d.x0, d.y1 - d.y0);
  glClearColor(clear[0], clear[1], clear[2], 1.0f);
  glClear(GL_COLOR_BUFFER_BIT);
  for (std::size_t i = 0; i < backdrops.size(); ++i) {
    const IRect r = intersect(backdrops[i].r, d);
    if (r.empty()) continue;
    const ImU32 c = bcol[i];
    glScissor(r.x0, fh - r.y1, r.x1 - r.x0, r.y1 - r.y0);
    glClearColor(float(c & 0xff) / 255.0f, float((c >> 8) & 0xff) / 255.0f, float((c >> 16) & 0xff) / 255.0f, 1.0f);
    glClear(GL_COLOR_BUFFER_BIT);
  }
  glDisable(GL_SCISSOR_TEST);
  // Every command clipped to d; lists with nothing inside d are left out (no upload, no draw).
  std::vector<ImDrawList*> lists;
  std::vector<ImVec4> saved;
  for (int l = 0; l < dd->CmdListsCount; ++l) {
    ImDrawList* dl = dd->CmdLists[l];
    bool any = false;
    for (int c = 0; c < dl->CmdBuffer.Size; ++c) {
      ImDrawCmd& cmd = dl->CmdBuffer[c];
      saved.push_back(cmd.ClipRect);
      if (cmd.UserCallback) {
        any = true;
        continue;
      }
      const IRect& box = lists_[std::size_t(l)][std::size_t(c)].r;  // what the command can touch
      cmd.ClipRect = intersect(box, d).empty() ? ImVec4(0, 0, 0, 0) : clip_to(cmd.ClipRect, d, dd->DisplayPos, dd->FramebufferScale);
      if (cmd.ClipRect.z > cmd.ClipRect.x) any = true;
    }
    if (any) lists.push_back(dl);
  }
  if (!lists.empty()) {
    ImDrawData part = *dd;
    part.CmdLists = lists.data();
    part.CmdListsCount = int(lists.size());
    ImGui_ImplOpenGL3_RenderDrawData(&part);
  }
  std::size_t k = 0;
  for (int l = 0; l < dd->CmdListsCount; ++l)
    for (int c = 0; c < dd->CmdLists[l]->CmdBuffer.Size; ++c) dd->CmdLists[l]->CmdBuffer[c].ClipRect = saved[k++];
}

void Presenter::render(ImDrawData* dd, const std::vector<App::Backdrop>& backdrops, const float clear[3], int fw, int fh, float bx,
                       float by) {
  if (!ok_ || fw <= 0 || fh <= 0) {
    full_redraw(dd, backdrops, clear, fw, fh, bx, by);
    redrawn_ = 1.0;
    rects_ = 1;
    return;
  }
  if (!fbo_ || fw != w_ || fh != h_) {
    if (!tex_) glGenTextures(1, &tex_);
    glBindTexture(GL_TEXTURE_2D, tex_);
    // BGRA like the window's own buffer: the copy to the window is then a plain memory copy (llvmpipe).
    glTexImage2D(GL_TEXTURE_2D, 0, GL_RGBA, fw, fh, 0, GL_BGRA, GL_UNSIGNED_BYTE, nullptr);  // unsized: Mesa matches BGRA
    glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_MIN_FILTER, GL_NEAREST);
    glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_MAG_FILTER, GL_NEAREST);
    glBindTexture(GL_TEXTURE_2D, 0);
    if (!fbo_) p_gen_framebuffers(1, &fbo_);
    p_bind_framebuffer(GL_FRAMEBUFFER, fbo_);
    p_framebuffer_texture_2d(GL_FRAMEBUFFER, GL_COLOR_ATTACHMENT0, GL_TEXTURE_2D, tex_, 0);
    if (p_framebuffer_parameteri) p_framebuffer_parameteri(GL_FRAMEBUFFER, kFlipYMesa, GL_TRUE);
    const bool complete = p_check_framebuffer_status(GL_FRAMEBUFFER) == GL_FRAMEBUFFER_COMPLETE;
    p_bind_framebuffer(GL_FRAMEBUFFER, 0);
    if (!complete) {  // no offscreen frame: draw everything every frame
      ok_ = false;
      full_redraw(dd, backdrops, clear, fw, fh, bx, by);
      return;
    }
    w_ = fw;
    h_ = fh;
    valid_ = false;
  }

  // This frame's commands and backdrops: where each can draw, and a hash of what it draws.
  const IRect screen{0, 0, fw, fh};
  const ImVec2 off = dd->DisplayPos, sc = dd->FramebufferScale;
  std::vector<std::vector<Item>> lists(std::size_t(std::max(0, dd->CmdListsCount)));
  for (int l = 0; l < dd->CmdListsCount; ++l) {
    const ImDrawList* dl = dd->CmdLists[l];
    auto& items = lists[std::size_t(l)];
    items.resize(std::size_t(dl->CmdBuffer.Size));
    for (int c = 0; c < dl->CmdBuffer.Size; ++c) {
      const ImDrawCmd& cmd = dl->CmdBuffer[c];
      std::uint64_t h = mix(0x51ed27ull, std::uint64_t(reinterpret_cast<std::uintptr_t>(cmd.TextureId)));
      h = mix(h, bits(cmd.ClipRect.x) | bits(cmd.ClipRect.y) << 32);
      h = mix(h, bits(cmd.ClipRect.z) | bits(cmd.ClipRect.w) << 32);
      h = mix(h, cmd.ElemCount);
      h = mix(h, std::uint64_t(reinterpret_cast<std::uintptr_t>(cmd.UserCallback)));
      float x0 = 1e30f, y0 = 1e30f, x1 = -1e30f, y1 = -1e30f;
      const ImDrawIdx* idx = dl->IdxBuffer.Data + cmd.IdxOffset;
      const ImDrawVert* vtx = dl->VtxBuffer.Data + cmd.VtxOffset;
      for (unsigned e = 0; e < cmd.ElemCount; ++e) {
        const ImDrawVert& v = vtx[idx[e]];
        h = mix(h, bits(v.pos.x) | bits(v.pos.y) << 32);
        h = mix(h, bits(v.uv.x) | bits(v.uv.y) << 32);
        h = mix(h, v.col);
        x0 = std::min(x0, v.pos.x);
        y0 = std::min(y0, v.pos.y);
        x1 = std::max(x1, v.pos.x);
        y1 = std::max(y1, v.pos.y);
      }
      IRect r{};
      if (cmd.UserCallback) r = screen;
      else if (cmd.ElemCount > 0) {
        const float cx0 = std::max(x0, cmd.ClipRect.x), cy0 = std::max(y0, cmd.ClipRect.y);
        const float cx1 = std::min(x1, cmd.ClipRect.z), cy1 = std::min(y1, cmd.ClipRect.w);
        if (cx1 > cx0 && cy1 > cy0)  // one pixel of margin for rounding
          r = intersect(screen, {int(std::floor((cx0 - off.x) * sc.x)) - 1, int(std::floor((cy0 - off.y) * sc.y)) - 1,
                                 int(std::ceil((cx1 - off.x) * sc.x)) + 1, int(std::ceil((cy1 - off.y) * sc.y)) + 1});
      }
      items[std::size_t(c)] = {r, h};
    }
  }
  std::vector<Item> bd(backdrops.size());
  std::vector<ImU32> bcol(backdrops.size());
  for (std::size_t i = 0; i < backdrops.size(); ++i) {
    const auto& b = backdrops[i];
    bd[i].r = intersect(screen, {int(b.rect.min.x * bx), int(b.rect.min.y * by), int(b.rect.max.x * bx), int(b.rect.max.y * by)});
    bd[i].hash = b.colour;
    bcol[i] = b.colour;
  }

  // What changed since the kept frame: both where a command drew and where it draws now.
  std::vector<IRect> damage;
  auto compare = [&](const std::vector<Item>& was, const std::vector<Item>& now) {
    if (was.size() != now.size()) {
      for (const Item& it : was) damage.push_back(it.r);
      for (const Item& it : now) damage.push_back(it.r);
      return;
    }
    for (std::size_t i = 0; i < now.size(); ++i)
      if (was[i].hash != now[i].hash || !same(was[i].r, now[i].r)) {
        damage.push_back(was[i].r);
        damage.push_back(now[i].r);
      }
  };
  if (!valid_ || full_) damage.push_back(screen);
  else {
    for (std::size_t l = 0; l < std::max(lists.size(), lists_.size()); ++l)
      compare(l < lists_.size() ? lists_[l] : std::vector<Item>{}, l < lists.size() ? lists[l] : std::vector<Item>{});
    compare(backdrops_, bd);
  }
  lists_ = std::move(lists);
  backdrops_ = std::move(bd);
  damage = merge(std::move(damage), 8);
  long area = 0;
  for (const IRect& d : damage) area += d.area();
  if (area > long(fw) * long(fh) * 6 / 10) {
    damage = {screen};
    area = screen.area();
  }

  p_bind_framebuffer(GL_FRAMEBUFFER, fbo_);
  glViewport(0, 0, fw, fh);
  for (const IRect& d : damage) draw_rect(dd, d, backdrops_, bcol, clear, fh);
  valid_ = true;
  redrawn_ = double(area) / double(screen.area());
  rects_ = int(damage.size());

  // The kept frame to the window.
  p_bind_framebuffer(GL_READ_FRAMEBUFFER, fbo_);
  p_bind_framebuffer(GL_DRAW_FRAMEBUFFER, 0);
  p_blit_framebuffer(0, 0, fw, fh, 0, 0, fw, fh, GL_COLOR_BUFFER_BIT, GL_NEAREST);
  p_bind_framebuffer(GL_FRAMEBUFFER, 0);
}

}  // namespace c2path::viewer
