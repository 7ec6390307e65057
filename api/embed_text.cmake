# api/embed_text.cmake: writes OUTPUT, a C++ file defining the constant NAME (declared in
# HEADER) as the whole text of INPUT, in a raw string literal. Run by api/CMakeLists.txt with
# `cmake -P` whenever INPUT changes.
file(READ "${INPUT}" text)
set(delimiter "ampledger_embed")
string(FIND "${text}" ")${delimiter}\"" clash)
if(NOT clash EQUAL -1)
  message(FATAL_ERROR "${INPUT} contains the raw string delimiter )${delimiter}\"")
endif()
file(WRITE "${OUTPUT}"
  "// Generated from ${INPUT} by api/embed_text.cmake; edit that file, not this one.\n"
  "#include \"${HEADER}\"\n\n"
  "namespace ampledger {\n"
  "const char ${NAME}[] = R\"${delimiter}(${text})${delimiter}\";\n"
  "}  // namespace ampledger\n")
