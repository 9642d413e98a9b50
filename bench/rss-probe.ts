/** Preloaded with `node --import` into a measured child: reports its peak RSS (KiB) on stderr at exit. */
process.on('exit', () => {
  process.stderr.write(`\n@@maxrss_kib=${process.resourceUsage().maxRSS}\n`);
});
