# Writes a C++ source holding every migration file's text, in order.
# Inputs: OUT (the .cpp to write), FILES (the sorted list of .sql paths).
set(body "// Generated from migrations/*.sql; do not edit.\n#include \"store/migrations.h\"\n\nnamespace keel::store {\nconst std::vector<Migration>& migrations() {\n  static const std::vector<Migration> all = {\n")
foreach(file ${FILES})
  get_filename_component(name ${file} NAME)
  string(REGEX MATCH "^[0-9]+" number "${name}")
  math(EXPR version "${number}")
  file(READ ${file} sql)
  set(body "${body}    {${version}, \"${name}\", R\"keelsql(${sql})keelsql\"},\n")
endforeach()
set(body "${body}  };\n  return all;\n}\n}  // namespace keel::store\n")
file(WRITE ${OUT}.tmp "${body}")
file(COPY_FILE ${OUT}.tmp ${OUT} ONLY_IF_DIFFERENT)
