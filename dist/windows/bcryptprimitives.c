/* A stand-in for bcryptprimitives.dll, which wine 8.0 (Debian 12) lacks and
 * Rust's standard library (>= 1.78) imports for ProcessPrng. Used only by
 * dist/check-windows to run the DLL under wine; never shipped. It fills the
 * buffer from RtlGenRandom (advapi32's SystemFunction036), which wine has. */
#include <windows.h>

BOOLEAN WINAPI SystemFunction036(PVOID buffer, ULONG length);

BOOL WINAPI ProcessPrng(PBYTE data, SIZE_T length) {
  while (length > 0) {
    ULONG chunk = length > 0x40000000 ? 0x40000000 : (ULONG)length;
    if (!SystemFunction036(data, chunk)) return FALSE;
    data += chunk;
    length -= chunk;
  }
  return TRUE;
}
