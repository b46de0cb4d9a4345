#include "advisor_states.hpp"

#include <type_traits>

namespace floc::app {
namespace {

using namespace floc::advisors;

// The dotted key of a member inside the nested structs being visited ("history.mean").
class key_path {
public:
    void push(std::string_view p) { prefix_.push_back(std::string{p}); }
    void pop() { prefix_.pop_back(); }

protected:
    [[nodiscard]] std::string key(std::string_view name) const {
        std::string k;
        for (const auto& p : prefix_) {
            k += p + ".";
        }
        return k + std::string{name};
    }

private:
    std::vector<std::string> prefix_;
};

// Writes every visited member into a section.
class writer : public key_path {
public:
    explicit writer(store::state_section& out) : out_(out) {}

    template <class T>
    void operator()(std::string_view name, const T& v) {
        if constexpr (std::is_same_v<T, bool> || std::is_arithmetic_v<T>) {
            out_[key(name)] = static_cast<double>(v);
        } else {
            std::vector<double> list(v.begin(), v.end());
            out_[key(name)] = std::move(list);
        }
    }
    void list(std::string_view name, std::vector<double> v) { out_[key(name)] = std::move(v); }

private:
    store::state_section& out_;
};

// Reads every visited member from a section; missing members keep their value.
class reader : public key_path {
public:
    explicit reader(const store::state_section& in) : in_(in) {}

    template <class T>
    void operator()(std::string_view name, T& v) {
        const auto it = in_.find(key(name));
        if (it == in_.end()) {
            return;
        }
        if constexpr (std::is_same_v<T, bool>) {
            if (const auto* d = std::get_if<double>(&it->second)) {
                v = *d != 0.0;
            }
        } else if constexpr (std::is_arithmetic_v<T>) {
            if (const auto* d = std::get_if<double>(&it->second)) {
                v = static_cast<T>(*d);
            }
        } else {
            if (const auto* l = std::get_if<std::vector<double>>(&it->second)) {
                for (std::size_t i = 0; i < v.size() && i < l->size(); ++i) {
                    v[i] = (*l)[i];
                }
            }
        }
    }
    [[nodiscard]] std::vector<double> list(std::string_view name) const {
        const auto it = in_.find(key(name));
        if (it == in_.end()) {
            return {};
        }
        const auto* l = std::get_if<std::vector<double>>(&it->second);
        return l != nullptr ? *l : std::vector<double>{};
    }

private:
    const store::state_section& in_;
};

template <class V, class S>
void nested(V& v, std::string_view prefix, S& s) {
    v.push(prefix);
    visit(v, s);
    v.pop();
}

// --- the members, once ------------------------------------------------------------------------

template <class V, class M>
void visit(V& v, M& m) requires std::is_same_v<std::remove_const_t<M>, output_memory> {
    v("has_value", m.has_value);
    v("value", m.value);
    v("at_s", m.at_s);
    v("has_good", m.has_good);
    v("good_value", m.good_value);
    v("good_at_s", m.good_at_s);
    v("last_was_good", m.last_was_good);
}

template <class V, class M>
void visit(V& v, M& m) requires std::is_same_v<std::remove_const_t<M>, pi_memory> {
    v("primed", m.primed);
    v("integral", m.integral);
    v("at_s", m.at_s);
}

template <class V, class M>
void visit(V& v, M& m) requires std::is_same_v<std::remove_const_t<M>, rolling_window> {
    v("bucket_s", m.bucket_s);
    v("newest", m.newest);
    v("last_at_s", m.last_at_s);
    v("sum", m.sum);
    v("weight", m.weight);
}

template <class V, class S>
void visit(V& v, S& s) requires std::is_same_v<std::remove_const_t<S>, aeration_state> {
    nested(v, "out", s.out);
    v("last_mode", s.last_mode);
    nested(v, "loop", s.loop);
    v("last_feedforward_g_per_m3", s.last_feedforward_g_per_m3);
    v("ammonia_side", s.ammonia_side);
    v("ammonia_side_since_s", s.ammonia_side_since_s);
    nested(v, "flow_day", s.flow_day);
    nested(v, "nitrate_trend", s.nitrate_trend);
    v("raise_active", s.raise_active);
    v("raise_since_s", s.raise_since_s);
    v("residual_active", s.residual_active);
    v("residual_since_s", s.residual_since_s);
    v("light_active", s.light_active);
    v("light_since_s", s.light_since_s);
    v("rules_level_g_per_m3", s.rules_level_g_per_m3);
}

template <class V, class S>
void visit(V& v, S& s) requires std::is_same_v<std::remove_const_t<S>, recycle_state> {
    nested(v, "out", s.out);
    nested(v, "loop", s.loop);
}

template <class V, class S>
void visit(V& v, S& s) requires std::is_same_v<std::remove_const_t<S>, ras_state> {
    nested(v, "out", s.out);
    nested(v, "trim", s.trim);
    v("last_trim", s.last_trim);
}

// The waste advisor's daily samples, one list per member.
#define FLOC_WASTE_DAY_MEMBERS(X)                                                                  \
    X(flow_sum) X(flow_weight) X(was_flow_sum) X(was_flow_weight) X(temperature_sum)               \
    X(temperature_weight) X(mlss_sum) X(mlss_count) X(was_solids_sum) X(was_solids_count)          \
    X(effluent_tss_sum) X(effluent_tss_count) X(bod_sum) X(bod_count)

template <class S>
void visit(writer& v, S& s) requires std::is_same_v<std::remove_const_t<S>, waste_state> {
    nested(v, "out", s.out);
    std::vector<double> day;
    for (const waste_day& d : s.days) {
        day.push_back(static_cast<double>(d.day));
    }
    v.list("days.day", day);
#define FLOC_WRITE_DAY(m)                                                                          \
    {                                                                                              \
        std::vector<double> list;                                                                  \
        for (const waste_day& d : s.days) {                                                        \
            list.push_back(d.m);                                                                   \
        }                                                                                          \
        v.list("days." #m, std::move(list));                                                       \
    }
    FLOC_WASTE_DAY_MEMBERS(FLOC_WRITE_DAY)
#undef FLOC_WRITE_DAY
    v("has_sample", s.has_sample);
    v("last_sample_at_s", s.last_sample_at_s);
    v("lab_sampled_at_s", s.lab_sampled_at_s);
    v("computed_day", s.computed_day);
    v("base_day", s.base_day);
    v("base_value", s.base_value);
    nested(v, "mlss_loop", s.mlss_loop);
}

void visit(reader& v, waste_state& s) {
    nested(v, "out", s.out);
    const std::vector<double> day = v.list("days.day");
    s.days.assign(day.size(), waste_day{});
    for (std::size_t i = 0; i < day.size(); ++i) {
        s.days[i].day = static_cast<std::int64_t>(day[i]);
    }
#define FLOC_READ_DAY(m)                                                                           \
    {                                                                                              \
        const std::vector<double> list = v.list("days." #m);                                       \
        for (std::size_t i = 0; i < s.days.size() && i < list.size(); ++i) {                       \
            s.days[i].m = list[i];                                                                 \
        }                                                                                          \
    }
    FLOC_WASTE_DAY_MEMBERS(FLOC_READ_DAY)
#undef FLOC_READ_DAY
    v("has_sample", s.has_sample);
    v("last_sample_at_s", s.last_sample_at_s);
    v("lab_sampled_at_s", s.lab_sampled_at_s);
    v("computed_day", s.computed_day);
    v("base_day", s.base_day);
    v("base_value", s.base_value);
    nested(v, "mlss_loop", s.mlss_loop);
}

template <class S>
void save_any(store::state_section& out, const S& s) {
    writer w{out};
    visit(w, s);
}

template <class S>
void load_any(const store::state_section& in, S& s) {
    reader r{in};
    visit(r, s);
}

} // namespace

void save_state(store::state_section& out, const aeration_state& s) { save_any(out, s); }
void save_state(store::state_section& out, const recycle_state& s) { save_any(out, s); }
void save_state(store::state_section& out, const ras_state& s) { save_any(out, s); }
void save_state(store::state_section& out, const waste_state& s) { save_any(out, s); }

void load_state(const store::state_section& in, aeration_state& s) { load_any(in, s); }
void load_state(const store::state_section& in, recycle_state& s) { load_any(in, s); }
void load_state(const store::state_section& in, ras_state& s) { load_any(in, s); }
void load_state(const store::state_section& in, waste_state& s) { load_any(in, s); }

} // namespace floc::app
