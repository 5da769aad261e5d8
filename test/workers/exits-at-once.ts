// A worker-process entry that dies on start, for the pool's give-up test.
process.exit(3);
