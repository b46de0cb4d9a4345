"""An independent Modbus/TCP client for the interop tests: Debian's python3-pymodbus 3.0.

Run with /usr/bin/python3 (Debian's interpreter, where the package lives):

    pymodbus_peer.py PORT write   writes the agreed values, reads, prints what it saw
    pymodbus_peer.py PORT read    reads what the other peers wrote, prints it

Each line printed is "name value...", checked by interop_test.cpp. pymodbus sends unit id 0
unless told otherwise; the server must echo it. Loopback only.
"""

import sys

from pymodbus.client import ModbusTcpClient
from pymodbus.mei_message import ReadDeviceInformationRequest
from pymodbus.pdu import ExceptionResponse


def show(name, values):
    print(name, " ".join(str(v) for v in values), flush=True)


def exception_code(response):
    if isinstance(response, ExceptionResponse):
        return response.exception_code
    return "none"


def device_info(client, code):
    rr = client.execute(ReadDeviceInformationRequest(read_code=code, object_id=0))
    if rr.isError():
        return ["error"]
    return [f"{k}={v.decode()}" for k, v in sorted(rr.information.items())]


def write_phase(client):
    assert not client.write_registers(10, [1111, 2222, 3333]).isError()  # FC 16
    assert not client.write_register(13, 4444).isError()  # FC 06
    assert not client.write_coil(5, True).isError()  # FC 05
    pattern = [True, False, True, True, False, False, True, True, True, False]
    assert not client.write_coils(20, pattern).isError()  # FC 15
    show("input_registers_0_4", client.read_input_registers(0, 5).registers)  # FC 04
    show("discrete_inputs_0_8", [int(b) for b in client.read_discrete_inputs(0, 9).bits[:9]])
    show("holding_10_13", client.read_holding_registers(10, 4).registers)  # FC 03
    show("coils_20_29", [int(b) for b in client.read_coils(20, 10).bits[:10]])  # FC 01
    assert not client.write_register(4, 0x12).isError()
    assert not client.mask_write_register(4, 0xF2, 0x25).isError()  # FC 22
    show("mask_write_4", client.read_holding_registers(4, 1).registers)
    rw = client.readwrite_registers(read_address=29, read_count=3, write_address=30,
                                    write_registers=[0xAAAA, 0xBBBB])  # FC 23
    show("read_write_29_31", rw.registers)
    show("device_basic", device_info(client, 1))  # FC 43 / 14
    show("device_regular", device_info(client, 2))
    show("exception_read_past_end", [exception_code(client.read_holding_registers(199, 2))])
    show("exception_write_protected", [exception_code(client.write_register(185, 1))])
    show("exception_quantity", [exception_code(client.read_input_registers(0, 126))])


def read_phase(client):
    show("holding_10_17", client.read_holding_registers(10, 8).registers)
    show("coil_5", [int(client.read_coils(5, 1).bits[0])])


def main():
    port = int(sys.argv[1])
    phase = sys.argv[2]
    client = ModbusTcpClient("127.0.0.1", port=port, timeout=3, retries=0)
    if not client.connect():
        print("cannot connect", flush=True)
        return 1
    try:
        if phase == "write":
            write_phase(client)
        else:
            read_phase(client)
    finally:
        client.close()
    print("done", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
