// Entry of the upload reader's worker thread (server/services/limit-file-thread.ts): the thread
// loads the TypeScript sources through tsx, as the server does.
//
// Reading a file is background work: on Linux a thread has its own nice value, so this thread
// (from its first step, compiling the sources) gives way to the server's event loop when the
// cores are busy. Elsewhere, or when not allowed, it keeps the default priority.
try {
  const tid = Number(require('node:fs').readlinkSync('/proc/thread-self').split('/').pop());
  if (Number.isInteger(tid) && tid > 0) require('node:os').setPriority(tid, 10);
} catch {
  // the default priority
}
require('tsx/cjs/api').register();
require('./limit-file-thread.ts');
