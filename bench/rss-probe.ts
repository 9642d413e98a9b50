/**
 * Preloaded with `node --import` into a measured child: reports its peak RSS (KiB) and its CPU time (user + system,
 * all threads, µs) on stderr at exit.
 */
process.on('exit', () => {
  const usage = process.resourceUsage();
  process.stderr.write(`\n@@maxrss_kib=${usage.maxRSS} cpu_us=${usage.userCPUTime + usage.systemCPUTime}\n`);
});
