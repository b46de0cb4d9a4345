"""An independent Modbus/TCP client for flocsim's serving tests: Debian's python3-pymodbus 3.0.

Run with /usr/bin/python3 (Debian's interpreter, where the package lives):

    pymodbus_plc_reader.py PORT

Reads Marrowby's map (sim_plant/scenarios/marrowby.toml) and prints one line per block, "name
value...", checked by flocsim_serving_test.cpp against libmodbus's reads. The plant time is read
last: with flocsim --lockstep that read moves the plant on by one step. pymodbus sends unit id 0
unless told otherwise; the server answers every unit id. Loopback only.
"""

import sys

from pymodbus.client import ModbusTcpClient
from pymodbus.pdu import ExceptionResponse


def show(name, values):
    print(name, " ".join(str(v) for v in values), flush=True)


def registers(response):
    if isinstance(response, ExceptionResponse):
        return ["exception", response.exception_code]
    if response.isError():
        return ["error"]
    return response.registers


def main():
    port = int(sys.argv[1])
    client = ModbusTcpClient("127.0.0.1", port=port, timeout=5, retries=0)
    if not client.connect():
        print("cannot connect", flush=True)
        return 1
    try:
        show("input_2_39", registers(client.read_input_registers(2, 38)))  # FC 04
        show("input_200_219", registers(client.read_input_registers(200, 20)))
        show("holding_100", registers(client.read_holding_registers(100, 1)))  # FC 03
        show("holding_1000_1007", registers(client.read_holding_registers(1000, 8)))
        show("holding_1010_1021", registers(client.read_holding_registers(1010, 12)))
        show("discrete_0", [int(client.read_discrete_inputs(0, 1).bits[0])])  # FC 02
        show("input_38_41", registers(client.read_input_registers(38, 4)))  # past the map: 02
        show("holding_1008", registers(client.read_holding_registers(1008, 2)))  # a gap: 02
        show("plant_time", registers(client.read_input_registers(0, 2)))
    finally:
        client.close()
    print("done", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
