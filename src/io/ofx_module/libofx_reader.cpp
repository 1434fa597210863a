// keel's OFX module (io/ofx_module.h): libofx over one file. Built as
// keel-ofx.so, which links libofx and nothing of keel; io/ofx.cpp does
// everything else.
#include "io/ofx_module.h"

extern "C" __attribute__((visibility("default"))) int keel_ofx_read_v1(
    const char* file, const KeelOfxCallbacks* callbacks) {
  ofx_PARSER_msg = ofx_DEBUG_msg = ofx_DEBUG1_msg = ofx_DEBUG2_msg = ofx_DEBUG3_msg =
      ofx_DEBUG4_msg = ofx_DEBUG5_msg = ofx_STATUS_msg = ofx_INFO_msg = ofx_WARNING_msg =
          ofx_ERROR_msg = 0;
  LibofxContextPtr ctx = libofx_get_new_context();
  ofx_set_account_cb(ctx, callbacks->account, callbacks->data);
  ofx_set_statement_cb(ctx, callbacks->statement, callbacks->data);
  ofx_set_security_cb(ctx, callbacks->security, callbacks->data);
  ofx_set_transaction_cb(ctx, callbacks->transaction, callbacks->data);
  ofx_set_position_cb(ctx, callbacks->position, callbacks->data);
  const int result = libofx_proc_file(ctx, file, OFX);
  libofx_free_context(ctx);
  return result;
}
