/* Hooks the example rig firmware (rig_firmware.c) needs from a board: a microsecond clock, the
 * serial port's bytes in and out, one sensor and one actuator. Implement these five functions
 * for your microcontroller (a UART interrupt filling a ring buffer, a timer, an ADC and a PWM
 * or DAC output) and link them with rig_firmware.c.
 *
 * Plain C99; no dynamic memory anywhere. */
#ifndef LOOPWRIGHT_RIG_PLATFORM_H_
#define LOOPWRIGHT_RIG_PLATFORM_H_

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* A free-running microsecond counter; it may wrap at 2^32 (about 71.6 minutes): the firmware
 * extends it to 64 bits as long as rig_poll runs at least once per wrap. */
uint32_t rig_platform_micros(void);

/* The next received byte (0..255), or -1 when none is waiting. Must not block. */
int rig_platform_read_byte(void);

/* Queues bytes for sending on the serial port. May block briefly; at 115200 baud a 40-byte
 * sample line takes about 3.5 ms, so keep the sample rate within what the baud rate carries. */
void rig_platform_write(const char* bytes, size_t count);

/* The process output Y, in the rig's units, measured now. */
double rig_platform_read_output(void);

/* Drives the actuator to U (already clamped to the configured range). */
void rig_platform_set_actuator(double u);

#ifdef __cplusplus
}
#endif

#endif /* LOOPWRIGHT_RIG_PLATFORM_H_ */
