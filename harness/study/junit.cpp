// JUnit XML for regress (declared in regress.hpp): the layout CI systems read, i.e. the common
// JUnit schema's elements and attributes:
//
//   <testsuites name tests failures errors time>
//     <testsuite name tests failures errors skipped time>      one per case
//       <testcase name classname time>                          one per case-closure pair
//         <failure message type>text</failure>                  when the pair regressed
//
// A pair's failure names every metric that fell beyond its tolerance or went missing, with the
// old and new skill; a run that failed numerically is a failure of type "run".

#include <iomanip>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "harness/io/xml.hpp"
#include "harness/study/regress.hpp"

namespace plateau {
namespace {

using io::xml_escape;

std::string skill_text(const std::optional<double>& v) {
  if (!v) return "-";
  std::ostringstream s;
  s << std::setprecision(6) << *v;
  return s.str();
}

std::string seconds(double s) {
  std::ostringstream o;
  o << std::fixed << std::setprecision(3) << s;
  return o.str();
}

}  // namespace

std::string junit_xml(const RegressReport& r) {
  // Cases in the order they first appear in the suite.
  std::vector<std::string> cases;
  std::map<std::string, std::vector<const PairComparison*>> by_case;
  for (const PairComparison& p : r.pairs) {
    if (by_case.find(p.case_name) == by_case.end()) cases.push_back(p.case_name);
    by_case[p.case_name].push_back(&p);
  }
  double total_time = 0.0;
  for (const PairComparison& p : r.pairs) total_time += p.wall_s;

  std::ostringstream x;
  x << "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  x << "<testsuites name=\"" << xml_escape("plateau regress " + r.suite) << "\" tests=\""
    << r.pairs.size() << "\" failures=\"" << r.failures() << "\" errors=\"0\" time=\""
    << seconds(total_time) << "\">\n";
  for (const std::string& c : cases) {
    const auto& pairs = by_case[c];
    int failures = 0;
    double time = 0.0;
    for (const PairComparison* p : pairs) {
      failures += p->failed() ? 1 : 0;
      time += p->wall_s;
    }
    x << "  <testsuite name=\"" << xml_escape(c) << "\" tests=\"" << pairs.size()
      << "\" failures=\"" << failures << "\" errors=\"0\" skipped=\"0\" time=\"" << seconds(time)
      << "\">\n";
    for (const PairComparison* p : pairs) {
      x << "    <testcase name=\"" << xml_escape(p->name) << "\" classname=\""
        << xml_escape(r.suite + "." + c) << "\" time=\"" << seconds(p->wall_s) << "\"";
      if (!p->failed()) {
        x << "/>\n";
        continue;
      }
      x << ">\n";
      if (!p->failure.empty()) {
        x << "      <failure message=\"" << xml_escape("the run failed: " + p->failure)
          << "\" type=\"run\">" << xml_escape(p->failure) << "</failure>\n";
      } else {
        std::string message;
        std::string text;
        int fell = 0;
        for (const MetricChange& m : p->changes) {
          if (m.kind != MetricChange::Kind::regressed && m.kind != MetricChange::Kind::missing) {
            continue;
          }
          ++fell;
          message += (message.empty() ? "" : "; ") + m.id + " " + skill_text(m.old_skill) + " -> " +
                     skill_text(m.new_skill);
          text += m.id + ": skill " + skill_text(m.old_skill) + " -> " + skill_text(m.new_skill) +
                  (m.kind == MetricChange::Kind::missing
                       ? " (missing from the new run)"
                       : " (tolerance " + skill_text(m.tolerance) + ")") +
                  "\n";
        }
        x << "      <failure message=\""
          << xml_escape(std::to_string(fell) + " metric" + (fell == 1 ? "" : "s") +
                        " fell: " + message)
          << "\" type=\"regression\">" << xml_escape(text) << "</failure>\n";
      }
      x << "    </testcase>\n";
    }
    x << "  </testsuite>\n";
  }
  x << "</testsuites>\n";
  return x.str();
}

}  // namespace plateau
