export * from './ignore.js';
export * from './stability.js';
export * from './queue.js';
export * from './watchInbox.js';
