// Linked into the sanitizer build (KEEL_SANITIZE=ON) and into every fuzz
// target.
//
// LeakSanitizer reads this hook at start-up. Each entry names a leak that is
// not keel's and explains why it is tolerated; keel's own code has none.
extern "C" const char* __lsan_default_suppressions();
extern "C" const char* __lsan_default_options();

// Tests compare stderr exactly, so a suppressed leak must stay silent.
extern "C" const char* __lsan_default_options() {
  return "print_suppressions=0";
}

extern "C" const char* __lsan_default_suppressions() {
  // glibc's newlocale() splits $LOCPATH with argz_add_sep() and keeps that
  // list for the life of the process; report/paper.cpp calls newlocale() once
  // per run to read the paper size, so the loss is a few bytes, once.
  //
  // libofx (Debian's libofx7) drops the containers of a statement it was
  // building when the SGML parser gives up on malformed bytes: a loss inside
  // the library, once per file read, which keel cannot free and which ends
  // with the process. keel's own objects around read_ofx() are RAII.
  return "leak:argz_add_sep\n"
         "leak:libofx.so\n";
}
