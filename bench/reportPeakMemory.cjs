// Preloaded (node -r) into the command-line process the bench's "large" section starts: at exit
// it prints the process's peak resident memory (kilobytes, as the operating system counts it),
// which the bench reads from the child's stderr.
process.on("exit", () => {
  process.stderr.write(`\npeak resident kB ${process.resourceUsage().maxRSS}\n`);
});
