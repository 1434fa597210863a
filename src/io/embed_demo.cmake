# Writes a C++ source holding the demo scenario's files (examples/demo/data/*
# and examples/demo/rule.toml), so `keel demo` needs no files beside keel.
# Inputs: OUT (the .cpp to write), FILES (the paths, in the order to keep).
set(body "// Generated from examples/demo; do not edit.\n#include \"io/demo_data.h\"\n\nnamespace keel::io {\nconst std::vector<EmbeddedFile>& embedded_demo_files() {\n  static const std::vector<EmbeddedFile> all = {\n")
foreach(file ${FILES})
  get_filename_component(name ${file} NAME)
  file(READ ${file} text)
  string(FIND "${text}" ")keeldemo\"" clash)
  if(NOT clash EQUAL -1)
    message(FATAL_ERROR "${file} holds the raw-string delimiter )keeldemo\"")
  endif()
  set(body "${body}    {\"${name}\", R\"keeldemo(${text})keeldemo\"},\n")
endforeach()
set(body "${body}  };\n  return all;\n}\n}  // namespace keel::io\n")
file(WRITE ${OUT}.tmp "${body}")
file(COPY_FILE ${OUT}.tmp ${OUT} ONLY_IF_DIFFERENT)
