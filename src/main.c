/* ferrocirc — command-line entry point; all logic is in src/cli*.c. */
#define _POSIX_C_SOURCE 200809L /* setenv, execv, stat */
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "cli.h"

/* Network files from this size on are run with huge pages (below). */
#define HUGE_PAGES_MIN_FILE (1L << 20)

/* Why: a network of thousands of elements keeps tens to hundreds of megabytes in arrays and in
 * many small blocks (elements, coefficients, KLU's factors, CVODE's vectors) and reads them in
 * scattered order at every evaluation and solve; with 4 KiB pages most reads that miss the
 * caches miss the TLB as well. glibc gives the memory it takes from the kernel transparent huge
 * pages when its tunable glibc.malloc.hugetlb is 1 (madvise(2) MADV_HUGEPAGE, which Debian's
 * kernels honour: /sys/kernel/mm/transparent_hugepage/enabled = madvise), but it reads its
 * tunables only as a program starts (glibc manual, "Tunables"). So `run` and `sweep` of a
 * network file of 1 MiB or more execute ferrocirc once more with the tunable set, before
 * anything is read or written. GLIBC_TUNABLES set in any way (even empty) is left alone: the
 * user's settings stand, and after the re-execution it is set. If the re-execution fails, the
 * run goes on as it is. docs/performance.md: circuit (b), 20 beats, 4096 to 65 536 chambers
 * 8-20 % faster, cost exponent 1.054 -> 1.009. */
static void huge_pages_for_large_networks(char **argv)
{
  struct stat st;
  if (!argv[1] || (strcmp(argv[1], "run") && strcmp(argv[1], "sweep")) || !argv[2] ||
      argv[2][0] == '-' || getenv("GLIBC_TUNABLES"))
    return;
  if (stat(argv[2], &st) || !S_ISREG(st.st_mode) || st.st_size < HUGE_PAGES_MIN_FILE) return;
  if (setenv("GLIBC_TUNABLES", "glibc.malloc.hugetlb=1", 1)) return;
  execv("/proc/self/exe", argv);
  unsetenv("GLIBC_TUNABLES");
}

int main(int argc, char **argv)
{
  if (argc > 2) huge_pages_for_large_networks(argv);
  return fci_cli_main(argc, argv);
}
