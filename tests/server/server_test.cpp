// The Asio server in process on 127.0.0.1 (port 0), driven by raw sockets: pipelining, split
// and malformed frames, many clients, connection cap, idle timeout, allowlist, shutdown, and
// the fault hooks. TCPGuide = MODBUS Messaging on TCP/IP Implementation Guide V1.0b.
#include "hex.hpp"
#include "raw_client.hpp"
#include "running_server.hpp"

#include "floc/modbus/frame.hpp"
#include "floc/modbus/register_bank.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <chrono>
#include <memory>
#include <thread>
#include <vector>

namespace {

using namespace floc::modbus;
using namespace std::chrono_literals;
using floc::modbus::test::bytes;
using floc::modbus::test::hex;
using floc::modbus::test::raw_client;
using floc::modbus::test::running_server;

// A request ADU: transaction id, unit id and the PDU in hex.
std::vector<std::uint8_t> adu(std::uint16_t tid, std::uint8_t unit, std::string_view pdu_hex) {
    const auto pdu = bytes(pdu_hex);
    std::vector<std::uint8_t> out(max_adu_size);
    out.resize(encode_frame(tid, unit, pdu, out));
    return out;
}

// The PDU of a response frame, as hex ("" when there is none).
std::string pdu_of(const std::optional<std::vector<std::uint8_t>>& frame) {
    if (!frame || frame->size() < mbap_size) {
        return {};
    }
    return hex(std::span{*frame}.subspan(mbap_size));
}

std::uint16_t tid_of(const std::vector<std::uint8_t>& frame) {
    return static_cast<std::uint16_t>((frame[0] << 8U) | frame[1]);
}

class Server : public ::testing::Test {
protected:
    Server() {
        auto hr = bank.registers(table::holding_registers);
        for (std::size_t i = 0; i < hr.size(); ++i) {
            hr[i] = static_cast<std::uint16_t>(i);
        }
        bank.registers(table::input_registers)[0] = 0x1234;
    }

    running_server& serve(server_options options = {}) {
        live = std::make_unique<running_server>(bank, std::move(options));
        EXPECT_FALSE(live->start_error().has_value()) << live->start_error().value_or("");
        return *live;
    }

    // One request and its reply on `c`; the reply's PDU as hex.
    static std::string ask(raw_client& c, std::uint16_t tid, std::string_view pdu_hex,
                           std::uint8_t unit = 1) {
        if (!c.send(adu(tid, unit, pdu_hex))) {
            return "send failed";
        }
        const auto f = c.frame();
        if (!f) {
            return "no reply";
        }
        EXPECT_EQ(tid_of(*f), tid);
        return pdu_of(f);
    }

    register_bank bank{bank_sizes{1000, 1000, 1000, 1000}};
    std::unique_ptr<running_server> live;
};

TEST_F(Server, AnswersAndEchoesTransactionAndUnit) {
    // TCPGuide §4.4.2.5: transaction id and unit id copied into the response; protocol id 0;
    // length computed. Unit ids: 0 (pymodbus's default), 1 (mbpoll's), 0xFF (TCPGuide §4.4.1.2's
    // recommendation for direct connections), 247 (highest serial address).
    auto& s = serve();
    raw_client c{s.port()};
    ASSERT_TRUE(c.connected());
    for (const std::uint8_t unit :
         {std::uint8_t{0}, std::uint8_t{1}, std::uint8_t{0xFF}, std::uint8_t{247}}) {
        ASSERT_TRUE(c.send(adu(0xBEEF, unit, "04 00 00 00 01")));
        const auto f = c.frame();
        ASSERT_TRUE(f.has_value());
        EXPECT_EQ(hex(*f),
                  "BE EF 00 00 00 05 " + hex(std::array<std::uint8_t, 1>{unit}) + " 04 02 12 34");
    }
}

TEST_F(Server, PipelinedRequestsAnsweredInOrder) {
    // TCPGuide §4.2.1: several transactions may be outstanding on one connection. Fifty requests
    // in one send, more than the session queues at once, so reading pauses and resumes.
    auto& s = serve();
    raw_client c{s.port()};
    std::vector<std::uint8_t> burst;
    for (std::uint16_t i = 0; i < 50; ++i) {
        char pdu[32];
        std::snprintf(pdu, sizeof pdu, "03 00 %02X 00 01", static_cast<unsigned>(i));
        const auto a = adu(static_cast<std::uint16_t>(100 + i), 1, pdu);
        burst.insert(burst.end(), a.begin(), a.end());
    }
    ASSERT_TRUE(c.send(burst));
    for (std::uint16_t i = 0; i < 50; ++i) {
        const auto f = c.frame();
        ASSERT_TRUE(f.has_value()) << "reply " << i;
        EXPECT_EQ(tid_of(*f), 100 + i);
        char expect[32];
        std::snprintf(expect, sizeof expect, "03 02 00 %02X", static_cast<unsigned>(i));
        EXPECT_EQ(pdu_of(f), expect);
    }
    EXPECT_EQ(s.statistics().busy_replies, 0U);
}

TEST_F(Server, OneByteAtATimeWhileOthersAreServed) {
    // A client that sends one byte per segment does not hold up the others: between two of its
    // bytes, another client completes a whole transaction.
    auto& s = serve();
    raw_client slow{s.port()};
    raw_client fast{s.port()};
    const auto request = adu(7, 1, "03 00 0A 00 02");
    for (std::size_t i = 0; i < request.size(); ++i) {
        ASSERT_TRUE(slow.send(std::span{request}.subspan(i, 1)));
        EXPECT_EQ(ask(fast, static_cast<std::uint16_t>(i), "03 00 05 00 01"), "03 02 00 05");
    }
    EXPECT_EQ(pdu_of(slow.frame()), "03 04 00 0A 00 0B");
}

TEST_F(Server, ClientVanishingMidFrame) {
    auto& s = serve();
    raw_client other{s.port()};
    {
        raw_client gone{s.port()};
        const auto request = adu(1, 1, "03 00 00 00 10");
        ASSERT_TRUE(gone.send(std::span{request}.first(5)));
        EXPECT_EQ(ask(other, 1, "03 00 01 00 01"), "03 02 00 01");
        gone.abort(); // RST with half a frame sent
    }
    {
        raw_client gone{s.port()};
        const auto request = adu(1, 1, "10 00 00 00 02 04 00 01 00 02");
        ASSERT_TRUE(gone.send(std::span{request}.first(9)));
        gone.finish_sending(); // FIN with half a frame sent
    }
    EXPECT_TRUE(s.eventually([](server& srv) { return srv.connections() == 1; }));
    EXPECT_EQ(ask(other, 2, "03 00 02 00 01"), "03 02 00 02");
    EXPECT_EQ(bank.registers(table::holding_registers)[0], 0); // the half write did nothing
}

TEST_F(Server, ManyClientsAtOnce) {
    // Eight clients on eight threads, each with its own transactions, against one io_context.
    server_options o;
    o.max_connections = 8;
    auto& s = serve(o);
    std::vector<std::thread> clients;
    std::vector<int> good(8, 0);
    for (int k = 0; k < 8; ++k) {
        clients.emplace_back([&, k] {
            raw_client c{s.port()};
            for (int i = 0; i < 100; ++i) {
                const auto address = static_cast<unsigned>(k * 100 + i);
                char pdu[32];
                std::snprintf(pdu, sizeof pdu, "03 %02X %02X 00 01", address >> 8U,
                              address & 0xFFU);
                char expect[32];
                std::snprintf(expect, sizeof expect, "03 02 %02X %02X", address >> 8U,
                              address & 0xFFU);
                const auto tid = static_cast<std::uint16_t>(i);
                if (c.send(adu(tid, 1, pdu))) {
                    const auto f = c.frame();
                    if (f && tid_of(*f) == tid && pdu_of(f) == expect) {
                        ++good[static_cast<std::size_t>(k)];
                    }
                }
            }
        });
    }
    for (auto& t : clients) {
        t.join();
    }
    for (int k = 0; k < 8; ++k) {
        EXPECT_EQ(good[static_cast<std::size_t>(k)], 100) << "client " << k;
    }
    EXPECT_EQ(s.statistics().requests, 800U);
    EXPECT_EQ(s.statistics().connections_accepted, 8U);
}

TEST_F(Server, MalformedLengthClosesOnlyThatConnection) {
    auto& s = serve();
    raw_client good{s.port()};
    raw_client bad{s.port()};
    ASSERT_TRUE(bad.send(bytes("00 01 00 00 00 00 FF 03 00 00 00 01"))); // length 0
    EXPECT_TRUE(bad.closed_by_peer());
    raw_client worse{s.port()};
    ASSERT_TRUE(worse.send(bytes("00 01 00 00 01 00 FF 03 00 00 00 01"))); // length 256
    EXPECT_TRUE(worse.closed_by_peer());
    EXPECT_EQ(ask(good, 3, "03 00 03 00 01"), "03 02 00 03");
    EXPECT_EQ(s.statistics().malformed_frames, 2U);
}

TEST_F(Server, NonModbusProtocolIdDiscardedWithoutReply) {
    // TCPGuide §4.4.2.2: the indication is discarded; the connection stays up.
    auto& s = serve();
    raw_client c{s.port()};
    std::vector<std::uint8_t> two = bytes("00 05 00 01 00 06 01 03 00 00 00 01");
    const auto next = adu(6, 1, "03 00 06 00 01");
    two.insert(two.end(), next.begin(), next.end());
    ASSERT_TRUE(c.send(two));
    const auto f = c.frame();
    ASSERT_TRUE(f.has_value());
    EXPECT_EQ(tid_of(*f), 6); // the first reply is the second request's
    EXPECT_EQ(pdu_of(f), "03 02 00 06");
    EXPECT_EQ(s.statistics().discarded_frames, 1U);
    EXPECT_EQ(s.statistics().requests, 1U);
}

TEST_F(Server, ExceptionRepliesCounted) {
    auto& s = serve();
    raw_client c{s.port()};
    EXPECT_EQ(ask(c, 1, "41"), "C1 01");
    EXPECT_EQ(ask(c, 2, "03 00 00 00 7E"), "83 03");
    EXPECT_EQ(ask(c, 3, "03 03 E8 00 01"), "83 02");
    EXPECT_EQ(ask(c, 4, "03 03 E7 00 01"), "03 02 03 E7");
    EXPECT_EQ(s.statistics().exception_replies, 3U);
}

TEST_F(Server, HalfClosedClientStillGetsItsReplies) {
    auto& s = serve();
    raw_client c{s.port()};
    ASSERT_TRUE(c.send(adu(1, 1, "03 00 08 00 01")));
    c.finish_sending();
    EXPECT_EQ(pdu_of(c.frame()), "03 02 00 08");
    EXPECT_TRUE(c.closed_by_peer());
}

TEST_F(Server, ConnectionCapRefusesNew) {
    server_options o;
    o.max_connections = 2;
    o.when_full = capacity_policy::refuse_new;
    auto& s = serve(o);
    raw_client a{s.port()};
    raw_client b{s.port()};
    EXPECT_EQ(ask(a, 1, "03 00 01 00 01"), "03 02 00 01");
    EXPECT_EQ(ask(b, 1, "03 00 02 00 01"), "03 02 00 02");
    raw_client c{s.port()};
    EXPECT_TRUE(c.closed_by_peer());
    EXPECT_EQ(ask(a, 2, "03 00 03 00 01"), "03 02 00 03");
    EXPECT_EQ(s.statistics().connections_refused, 1U);
    b.close();
    ASSERT_TRUE(s.eventually([](server& srv) { return srv.connections() == 1; }));
    raw_client d{s.port()};
    EXPECT_EQ(ask(d, 1, "03 00 04 00 01"), "03 02 00 04");
}

TEST_F(Server, ConnectionCapClosesTheLongestIdle) {
    // TCPGuide §4.2.1 recommends closing the oldest unused connection when the limit is reached.
    server_options o;
    o.max_connections = 2;
    auto& s = serve(o);
    raw_client a{s.port()};
    raw_client b{s.port()};
    EXPECT_EQ(ask(a, 1, "03 00 01 00 01"), "03 02 00 01");
    std::this_thread::sleep_for(5ms); // b's last request is strictly later than a's
    EXPECT_EQ(ask(b, 1, "03 00 02 00 01"), "03 02 00 02");
    raw_client c{s.port()};
    EXPECT_EQ(ask(c, 1, "03 00 03 00 01"), "03 02 00 03");
    EXPECT_TRUE(a.closed_by_peer());
    EXPECT_EQ(ask(b, 2, "03 00 04 00 01"), "03 02 00 04");
    EXPECT_EQ(s.statistics().connections_replaced, 1U);
    EXPECT_EQ(s.connections(), 2U);
}

TEST_F(Server, IdleConnectionIsClosed) {
    server_options o;
    o.idle_timeout = 200ms;
    auto& s = serve(o);
    raw_client c{s.port()};
    ASSERT_TRUE(c.connected());
    EXPECT_TRUE(c.closed_by_peer(10s));
    EXPECT_EQ(s.statistics().connections_timed_out, 1U);
    const auto events = s.events();
    EXPECT_TRUE(std::any_of(events.begin(), events.end(), [](const server_event& e) {
        return e.kind == event_kind::connection_closed && e.reason == close_reason::idle_timeout;
    }));
}

TEST_F(Server, RequestsKeepAConnectionAlive) {
    server_options o;
    o.idle_timeout = 1s;
    auto& s = serve(o);
    raw_client c{s.port()};
    const auto until = std::chrono::steady_clock::now() + 1500ms;
    for (std::uint16_t tid = 0; std::chrono::steady_clock::now() < until; ++tid) {
        ASSERT_EQ(ask(c, tid, "03 00 01 00 01"), "03 02 00 01");
        std::this_thread::sleep_for(50ms);
    }
    EXPECT_EQ(s.statistics().connections_timed_out, 0U);
}

TEST_F(Server, AllowlistSeesTheClientAddress) {
    // TCPGuide §4.2.3: an optional access list of client IP addresses.
    server_options o;
    o.allow = [](std::uint32_t address) { return address == 0x7F000002U; }; // 127.0.0.2 only
    auto& s = serve(o);
    raw_client refused{s.port(), "127.0.0.1"};
    EXPECT_TRUE(refused.closed_by_peer());
    raw_client allowed{s.port(), "127.0.0.2"};
    EXPECT_EQ(ask(allowed, 1, "03 00 09 00 01"), "03 02 00 09");
    EXPECT_EQ(s.statistics().connections_refused, 1U);
    const auto events = s.events();
    EXPECT_TRUE(std::any_of(events.begin(), events.end(), [](const server_event& e) {
        return e.kind == event_kind::connection_refused && e.reason == close_reason::not_allowed &&
               e.client.address_v4 == 0x7F000001U;
    }));
}

TEST_F(Server, WritePolicyPerClientAddress) {
    bank.set_write_guard([](const client_info& c, table, std::uint16_t, std::size_t) -> refusal {
        if (c.address_v4 == 0x7F000003U) {
            return accepted;
        }
        return exception_code::illegal_function;
    });
    auto& s = serve();
    raw_client reader{s.port(), "127.0.0.1"};
    raw_client writer{s.port(), "127.0.0.3"};
    EXPECT_EQ(ask(reader, 1, "06 00 01 12 34"), "86 01");
    EXPECT_EQ(ask(writer, 1, "06 00 01 12 34"), "06 00 01 12 34");
    EXPECT_EQ(ask(reader, 2, "03 00 01 00 01"), "03 02 12 34");
}

TEST_F(Server, RecordsFunctionCodesPerClientAddress) {
    auto& s = serve();
    raw_client reader{s.port(), "127.0.0.4"};
    raw_client writer{s.port(), "127.0.0.5"};
    for (std::uint16_t i = 0; i < 3; ++i) {
        ask(reader, i, "03 00 00 00 01");
    }
    ask(reader, 3, "04 00 00 00 01");
    ask(reader, 4, "2B 0E 01 00");
    ask(writer, 1, "06 00 00 00 01");
    ask(writer, 2, "10 00 00 00 01 02 00 02");
    ask(writer, 3, "06 FF FF 00 01"); // refused (02), still recorded as sent
    const auto clients = s.on_io([](server& srv) { return srv.clients(); });
    ASSERT_EQ(clients.count(0x7F000004U), 1U);
    ASSERT_EQ(clients.count(0x7F000005U), 1U);
    const client_record& r = clients.at(0x7F000004U);
    EXPECT_EQ(r.by_function[0x03], 3U);
    EXPECT_EQ(r.by_function[0x04], 1U);
    EXPECT_EQ(r.by_function[0x2B], 1U);
    EXPECT_EQ(r.total(), 5U);
    EXPECT_EQ(r.writes(), 0U);
    const client_record& w = clients.at(0x7F000005U);
    EXPECT_EQ(w.by_function[0x06], 2U);
    EXPECT_EQ(w.writes(), 3U);
}

TEST_F(Server, EventsForOpenAndClose) {
    auto& s = serve();
    {
        raw_client c{s.port()};
        ask(c, 1, "03 00 00 00 01");
    }
    ASSERT_TRUE(s.eventually([](server& srv) { return srv.connections() == 0; }));
    const auto events = s.events();
    ASSERT_GE(events.size(), 2U);
    EXPECT_EQ(events[0].kind, event_kind::connection_opened);
    EXPECT_EQ(events[0].client.address_v4, 0x7F000001U);
    EXPECT_EQ(events[0].client.connection, 1U);
    EXPECT_EQ(events[1].kind, event_kind::connection_closed);
    EXPECT_EQ(events[1].reason, close_reason::peer_closed);
    EXPECT_EQ(events[1].client.unit_id, 1);
}

TEST_F(Server, StopClosesEveryConnectionAndRunReturns) {
    auto& s = serve();
    raw_client a{s.port()};
    raw_client b{s.port()};
    ask(a, 1, "03 00 00 00 01");
    const auto request = adu(1, 1, "03 00 00 00 01");
    ASSERT_TRUE(b.send(std::span{request}.first(3))); // mid-frame
    s.stop(); // joins the io_context thread: run() returned by itself
    EXPECT_TRUE(a.closed_by_peer());
    EXPECT_TRUE(b.closed_by_peer());
    raw_client late{s.port()};
    EXPECT_FALSE(late.connected());
}

TEST(ServerStart, ReportsWhyItCannotListen) {
    register_bank bank{bank_sizes{}};
    boost::asio::io_context io;
    server_options bad_address;
    bad_address.address = "plant.local";
    server a{io, bank, bad_address};
    const auto why = a.start();
    ASSERT_TRUE(why.has_value());
    EXPECT_NE(why->find("\"plant.local\" is not an IPv4 address"), std::string::npos) << *why;

    server b{io, bank, {}};
    ASSERT_FALSE(b.start().has_value());
    EXPECT_NE(b.port(), 0);
    EXPECT_TRUE(b.start().has_value()); // twice
    server_options same_port;
    same_port.port = b.port();
    server c{io, bank, same_port};
    const auto busy = c.start();
    ASSERT_TRUE(busy.has_value());
    EXPECT_NE(busy->find("bind"), std::string::npos) << *busy;

    server_options bad_identity;
    bad_identity.identity.vendor_name.clear();
    server d{io, bank, bad_identity};
    const auto id = d.start();
    ASSERT_TRUE(id.has_value());
    EXPECT_NE(id->find("vendor name is empty"), std::string::npos) << *id;
}

// --- Fault hooks ------------------------------------------------------------------------------

TEST_F(Server, DelayedReplyKeepsOrderAndOthersAreServed) {
    auto& s = serve();
    s.set_faults({{.kind = fault_kind::delay_reply, .function = 0x03, .delay = 300ms}});
    raw_client c{s.port()};
    raw_client other{s.port()};
    std::vector<std::uint8_t> two = adu(1, 1, "03 00 01 00 01");
    const auto second = adu(2, 1, "04 00 00 00 01");
    two.insert(two.end(), second.begin(), second.end());
    const auto sent = std::chrono::steady_clock::now();
    ASSERT_TRUE(c.send(two));
    // While c's reply is held back, another connection is answered.
    EXPECT_EQ(ask(other, 9, "04 00 00 00 01"), "04 02 12 34");
    const auto first = c.frame();
    ASSERT_TRUE(first.has_value());
    EXPECT_GE(std::chrono::steady_clock::now() - sent, 300ms);
    EXPECT_EQ(tid_of(*first), 1);
    EXPECT_EQ(pdu_of(first), "03 02 00 01");
    const auto then = c.frame();
    ASSERT_TRUE(then.has_value());
    EXPECT_EQ(tid_of(*then), 2); // not overtaken by the undelayed reply
}

TEST_F(Server, DropConnectionOnce) {
    auto& s = serve();
    s.set_faults({{.kind = fault_kind::drop_connection, .times = 1}});
    raw_client c{s.port()};
    ASSERT_TRUE(c.send(adu(1, 1, "03 00 00 00 01")));
    EXPECT_TRUE(c.closed_by_peer());
    EXPECT_EQ(s.on_io([](server& srv) { return srv.active_faults(); }), 0U);
    raw_client again{s.port()};
    EXPECT_EQ(ask(again, 2, "03 00 05 00 01"), "03 02 00 05");
}

TEST_F(Server, ExceptionForAnAddressRange) {
    auto& s = serve();
    s.set_faults({{.kind = fault_kind::exception_reply,
                   .first_address = 100,
                   .last_address = 199,
                   .exception = exception_code::gateway_target_failed}});
    raw_client c{s.port()};
    EXPECT_EQ(ask(c, 1, "03 00 96 00 01"), "83 0B");             // 150
    EXPECT_EQ(ask(c, 2, "03 00 5F 00 02"), "03 04 00 5F 00 60"); // 95..96: outside
    EXPECT_EQ(ask(c, 3, "03 00 60 00 05"), "83 0B");             // 96..100 touches 100
    EXPECT_EQ(ask(c, 4, "03 00 0A 00 01"), "03 02 00 0A");
    EXPECT_EQ(ask(c, 5, "06 00 C8 00 01"), "06 00 C8 00 01");      // 200: outside
    EXPECT_EQ(ask(c, 6, "2B 0E 01 00").substr(0, 5), "2B 0E");     // no address: not in a range
    EXPECT_EQ(bank.registers(table::holding_registers)[150], 150); // nothing done
}

TEST_F(Server, ExceptionForOneFunctionCode) {
    auto& s = serve();
    s.set_faults({{.kind = fault_kind::exception_reply,
                   .function = 0x06,
                   .exception = exception_code::server_device_busy}});
    raw_client c{s.port()};
    EXPECT_EQ(ask(c, 1, "06 00 01 00 09"), "86 06");
    EXPECT_EQ(bank.registers(table::holding_registers)[1], 1); // not written
    EXPECT_EQ(ask(c, 2, "03 00 01 00 01"), "03 02 00 01");
    s.set_faults({});
    EXPECT_EQ(ask(c, 3, "06 00 01 00 09"), "06 00 01 00 09");
}

TEST_F(Server, WrongTransactionId) {
    auto& s = serve();
    s.set_faults({{.kind = fault_kind::wrong_transaction_id, .times = 2}});
    raw_client c{s.port()};
    for (const std::uint16_t tid : {std::uint16_t{0x0010}, std::uint16_t{0xFFFF}}) {
        ASSERT_TRUE(c.send(adu(tid, 1, "03 00 01 00 01")));
        const auto f = c.frame();
        ASSERT_TRUE(f.has_value());
        EXPECT_EQ(tid_of(*f), static_cast<std::uint16_t>(tid + 1));
        EXPECT_EQ(pdu_of(f), "03 02 00 01");
    }
    EXPECT_EQ(ask(c, 0x20, "03 00 01 00 01"), "03 02 00 01"); // spent after two
    EXPECT_EQ(s.statistics().faults_applied, 2U);
}

TEST_F(Server, BusyWhenTooManyRequestsAreHeld) {
    // TCPGuide §4.4.2.2: with no free transaction resource the server answers 06.
    server_options o;
    o.max_pending = 2;
    auto& s = serve(o);
    s.set_faults({{.kind = fault_kind::delay_reply, .delay = 1s}});
    raw_client c{s.port()};
    std::vector<std::uint8_t> four;
    for (std::uint16_t tid = 1; tid <= 4; ++tid) {
        const auto a = adu(tid, 1, "03 00 07 00 01");
        four.insert(four.end(), a.begin(), a.end());
    }
    ASSERT_TRUE(c.send(four));
    const std::array<const char*, 4> expect{"03 02 00 07", "03 02 00 07", "83 06", "83 06"};
    for (std::uint16_t tid = 1; tid <= 4; ++tid) {
        const auto f = c.frame();
        ASSERT_TRUE(f.has_value()) << tid;
        EXPECT_EQ(tid_of(*f), tid);
        EXPECT_EQ(pdu_of(f), expect.at(tid - 1U));
    }
    EXPECT_EQ(s.statistics().busy_replies, 2U);
}

} // namespace
