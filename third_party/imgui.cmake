# CMake glue for Debian's Dear ImGui, GLFW and OpenGL packages (no foreign source here).
#
# Creates the imported target c2path::imgui from pkg-config `imgui` (libimgui-dev: the static
# library already contains the GLFW and OpenGL3 backends; -I/usr/include/imgui, -limgui -lstb),
# and pulls in GLFW (`glfw`) and OpenGL (`OpenGL::GL`). Only the viewer includes this file.
include_guard(GLOBAL)

find_package(PkgConfig REQUIRED)
pkg_check_modules(IMGUI REQUIRED IMPORTED_TARGET imgui)
find_package(glfw3 3.3 REQUIRED CONFIG)
set(OpenGL_GL_PREFERENCE GLVND)
find_package(OpenGL REQUIRED)

if(NOT TARGET c2path::imgui)
  add_library(c2path_imgui INTERFACE)
  # The headers are system headers: our warning flags are not meant for them.
  target_include_directories(c2path_imgui SYSTEM INTERFACE ${IMGUI_INCLUDE_DIRS})
  target_link_libraries(c2path_imgui INTERFACE PkgConfig::IMGUI glfw OpenGL::GL ${CMAKE_DL_LIBS})
  add_library(c2path::imgui ALIAS c2path_imgui)
endif()
