// Entry of the PDF writer's worker thread (server/figures/pdf-thread.ts): the thread loads the
// TypeScript sources through tsx, as the server does.
require('tsx/cjs/api').register();
require('./pdf-thread.ts');
