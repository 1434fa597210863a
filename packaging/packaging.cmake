# Installing keel and packaging it as a .deb (CPack).
#
# `cmake --install build [--prefix P]` puts in P (default /usr/local):
#   bin/keel, its OFX module lib/keel/keel-ofx.so, share/man/man1/keel.1.gz, share/bash-completion/completions/keel,
#   the zsh completion _keel (share/zsh/vendor-completions under /usr, where
#   Debian's zsh looks for packaged completions; share/zsh/site-functions
#   elsewhere), share/doc/keel/copyright.
# Nothing else is needed at run time: migrations and the demo scenario are
# compiled into the binary. `cpack -G DEB` (in the build folder) packs the
# same files under /usr.
include(GNUInstallDirs)

find_program(KEEL_GZIP gzip REQUIRED)
set(KEEL_INSTALLED_DOCS ${CMAKE_BINARY_DIR}/installed-docs)
add_custom_command(
  TARGET keel POST_BUILD
  COMMAND ${CMAKE_COMMAND} -DKEEL=$<TARGET_FILE:keel> -DGZIP=${KEEL_GZIP}
          -DOUT=${KEEL_INSTALLED_DOCS} -P ${CMAKE_SOURCE_DIR}/packaging/installed_docs.cmake
  COMMENT "Writing the manual page and completion scripts"
  VERBATIM)

install(TARGETS keel RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR})
# Loaded by keel for OFX files only, found relative to bin/keel (CMakeLists.txt).
install(TARGETS keel_ofx LIBRARY DESTINATION ${KEEL_OFX_MODULE_DIR})
install(FILES ${KEEL_INSTALLED_DOCS}/keel.1.gz DESTINATION ${CMAKE_INSTALL_MANDIR}/man1)
install(FILES ${KEEL_INSTALLED_DOCS}/keel.bash
        DESTINATION ${CMAKE_INSTALL_DATADIR}/bash-completion/completions RENAME keel)
# The zsh folder depends on the prefix in force when installing, which for a
# package is /usr (CPACK_SET_DESTDIR below keeps it visible here).
install(CODE "
  if(CMAKE_INSTALL_PREFIX STREQUAL \"/usr\")
    set(keel_zsh_dir \"\${CMAKE_INSTALL_PREFIX}/${CMAKE_INSTALL_DATADIR}/zsh/vendor-completions\")
  else()
    set(keel_zsh_dir \"\${CMAKE_INSTALL_PREFIX}/${CMAKE_INSTALL_DATADIR}/zsh/site-functions\")
  endif()
  file(INSTALL \"${KEEL_INSTALLED_DOCS}/_keel\" DESTINATION \"\${keel_zsh_dir}\")
")
install(FILES ${CMAKE_SOURCE_DIR}/packaging/copyright DESTINATION ${CMAKE_INSTALL_DOCDIR})

set(KEEL_PACKAGE_MAINTAINER "keel maintainers <maintainers@keel.invalid>"
    CACHE STRING "Maintainer field of the .deb")
set(CPACK_GENERATOR DEB)
set(CPACK_PACKAGE_NAME keel)
set(CPACK_PACKAGE_VERSION ${PROJECT_VERSION})
set(CPACK_PACKAGE_CONTACT ${KEEL_PACKAGE_MAINTAINER})
set(CPACK_PACKAGE_DESCRIPTION_SUMMARY
    "exact ledger of your own brokerage accounts, with rule-based rebalancing")
# Lines of at most 80 columns, as Debian's control files want them.
set(CPACK_PACKAGE_DESCRIPTION "keel keeps an exact, auditable record of several brokerage accounts
(trades, cash, dividends, withholding tax, fees, splits, transfers, tax lots),
turns a written valuation rule into each month's explained buy and sell orders,
back-tests the same rule on point-in-time history, and states time- and
money-weighted returns against a benchmark at year end, as text, HTML, PDF
(with Chromium), XLSX, CSV and JSON. It gives no investment or tax advice.")
set(CPACK_DEBIAN_FILE_NAME DEB-DEFAULT)
set(CPACK_DEBIAN_PACKAGE_SECTION utils)
set(CPACK_DEBIAN_PACKAGE_PRIORITY optional)
set(CPACK_DEBIAN_PACKAGE_SHLIBDEPS ON)  # Depends from the libraries keel links (dpkg-shlibdeps)
# keel opens libcrypto and libxlsxwriter by SONAME when first needed
# (core/shared_library.h), so dpkg-shlibdeps, which reads what keel links,
# does not see them: each one's dependency is taken from the shlibs file of
# the package that owns it here, as dpkg-shlibdeps would ("libssl3 (>= 3.0.22)").
find_program(KEEL_DPKG_QUERY dpkg-query)
set(KEEL_OPENED_DEPENDS "")
foreach(opened "${OPENSSL_CRYPTO_LIBRARY};${KEEL_LIBCRYPTO_SONAME}"
               "${KEEL_XLSXWRITER_LIBRARY};${KEEL_XLSXWRITER_SONAME}")
  list(GET opened 0 library)
  list(GET opened 1 soname)
  if(NOT KEEL_DPKG_QUERY)
    message(WARNING "no dpkg-query: the .deb will not depend on the package of ${soname}")
    continue()
  endif()
  file(REAL_PATH ${library} real)
  execute_process(COMMAND ${KEEL_DPKG_QUERY} -S ${real} OUTPUT_VARIABLE owner
                  COMMAND_ERROR_IS_FATAL ANY)
  string(REGEX REPLACE ":.*" "" owner "${owner}")
  execute_process(COMMAND ${KEEL_DPKG_QUERY} --control-show ${owner} shlibs
                  OUTPUT_VARIABLE shlibs COMMAND_ERROR_IS_FATAL ANY)
  # libcrypto.so.3 is "libcrypto 3 <dependency>" in shlibs.
  string(REGEX REPLACE "^(.+)\\.so\\.(.+)$" "\\1 \\2" key ${soname})
  if(NOT shlibs MATCHES "(^|\n)${key} ([^\n]+)")
    message(FATAL_ERROR "the shlibs file of ${owner} has no line for ${soname}")
  endif()
  list(APPEND KEEL_OPENED_DEPENDS ${CMAKE_MATCH_2})
endforeach()
list(JOIN KEEL_OPENED_DEPENDS ", " CPACK_DEBIAN_PACKAGE_DEPENDS)
set(CPACK_DEBIAN_PACKAGE_RECOMMENDS chromium)  # prints the statement as PDF
set(CPACK_DEBIAN_PACKAGE_SUGGESTS "man-db, bash-completion")
set(CPACK_SET_DESTDIR ON)
set(CPACK_INSTALL_PREFIX /usr)
set(CPACK_PACKAGING_INSTALL_PREFIX /usr)
set(CPACK_STRIP_FILES ON)
include(CPack)
