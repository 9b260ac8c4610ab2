/* Example firmware for a rig speaking loopwright's rig protocol (io/rig_protocol.md): replies
 * to hello with caps, holds an open-loop actuator value, runs a closed loop with the controller
 * texts p, pi:Z, lead:Z:P and pid:Z1:Z2:P (discretised with the bilinear transform at the sample
 * period), streams samples, acknowledges every host line, and goes to the safe actuator value
 * when the host's heartbeat stops.
 *
 *   static struct rig_firmware rig;
 *   static const struct rig_config config = {1000, 0.0, 100.0, 0.0, 500, "heater-zone"};
 *   int main(void) { board_init(); rig_init(&rig, &config); for (;;) rig_poll(&rig); }
 *
 * Plain C99, no dynamic memory, no global state: everything lives in struct rig_firmware. Needs
 * snprintf with %g and strtod (on newlib-nano link with -u _printf_float). */
#ifndef LOOPWRIGHT_RIG_FIRMWARE_H_
#define LOOPWRIGHT_RIG_FIRMWARE_H_

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

#define RIG_PROTOCOL_VERSION 1
#define RIG_LINE_MAX 200 /* bytes of a line without its "\n" */

struct rig_config {
  uint32_t period_us; /* sample period, > 0 */
  double actuator_lo; /* actuator range, lo < hi */
  double actuator_hi;
  double safe_value;    /* in [lo, hi]: the value on a safe stop, at start and on a watchdog trip */
  uint32_t watchdog_ms; /* go safe when no host line arrives for this long in open or closed mode */
  const char* name;     /* no spaces */
};

enum rig_mode { RIG_MODE_IDLE, RIG_MODE_OPEN, RIG_MODE_CLOSED, RIG_MODE_SAFE };

/* A controller C(z) = (b0 + b1 z^-1 + b2 z^-2) / (1 + a1 z^-1 + a2 z^-2), gain included. */
struct rig_controller {
  double b[3];
  double a[3];
  double e[2]; /* e[k-1], e[k-2] */
  double u[2]; /* u[k-1], u[k-2], as applied (clamped): a simple anti-windup */
  int started;
};

struct rig_firmware {
  struct rig_config config;
  enum rig_mode mode;
  int streaming;
  uint32_t seq; /* SEQ of the next line sent */
  char in[RIG_LINE_MAX + 2];
  size_t in_length;
  int in_overflow;
  uint32_t last_micros;
  uint64_t now_us; /* the rig's clock, extended to 64 bits */
  uint64_t next_sample_us;
  uint64_t last_host_us;
  double open_value;
  double reference;
  double actuator;
  struct rig_controller controller;
};

/* CRC-16/CCITT-FALSE (poly 0x1021, init 0xFFFF, no reflection, xorout 0); "123456789" -> 0x29B1. */
uint16_t rig_crc16(const char* bytes, size_t count);

/* Starts idle, not streaming, actuator at the safe value. */
void rig_init(struct rig_firmware* rig, const struct rig_config* config);

/* Call as often as possible from the main loop: reads and answers host lines, takes a sample
 * when one is due (sending it while streaming), and runs the watchdog. */
void rig_poll(struct rig_firmware* rig);

#ifdef __cplusplus
}
#endif

#endif /* LOOPWRIGHT_RIG_FIRMWARE_H_ */
