// Linked into the sanitizer build only (KEEL_SANITIZE=ON).
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
  return "leak:argz_add_sep\n";
}
