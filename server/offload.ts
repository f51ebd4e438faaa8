/** Cases run on the worker threads (see ray-worker.ts). */
export {};
