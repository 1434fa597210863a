# Writes what `cmake --install` and the package ship beside the binary, from
# the program's own definitions: the manual page (gzip -9n, as Debian ships
# them) and the bash and zsh completion scripts.
# Inputs: KEEL (the built binary), GZIP (gzip), OUT (folder to write into).
file(MAKE_DIRECTORY ${OUT})
foreach(doc "manpage;keel.1" "completion;bash;keel.bash" "completion;zsh;_keel")
  list(POP_BACK doc name)
  execute_process(COMMAND ${KEEL} ${doc} OUTPUT_FILE ${OUT}/${name}.tmp RESULT_VARIABLE status)
  if(NOT status EQUAL 0)
    message(FATAL_ERROR "keel ${doc} failed (${status})")
  endif()
  file(COPY_FILE ${OUT}/${name}.tmp ${OUT}/${name} ONLY_IF_DIFFERENT)
  file(REMOVE ${OUT}/${name}.tmp)
endforeach()
execute_process(COMMAND ${GZIP} -9nc ${OUT}/keel.1 OUTPUT_FILE ${OUT}/keel.1.gz RESULT_VARIABLE status)
if(NOT status EQUAL 0)
  message(FATAL_ERROR "gzip of the manual page failed (${status})")
endif()
