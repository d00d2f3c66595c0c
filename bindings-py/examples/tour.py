# %% [markdown]
# # A tour of clout from Python
#
# Notebook-style: each `# %%` cell runs on its own in Jupyter or VS Code, and
# `python bindings-py/examples/tour.py` runs them all (from the repository root).
# Every body here is fictional.

# %%
import clout

board = clout.load("examples/transit.clout")
print(board)
print("members:", board.members[:4], "...")

# %% [markdown]
# ## Who holds the power?
# `report()` returns exactly the dict `clout report --format json` prints.

# %%
report = board.report(rule="budget")
for m in report["members"][:4]:
    print(f"{m['name']:10} swings {m['swings']:>6}  banzhaf {m['banzhaf']:.4f}  "
          f"shapley-shubik {m['shapley_shubik']:.4f}  veto {m['veto']}")
print("winning coalitions:", report["winning_coalitions"], "of", 2 ** len(board.members))
print(report["model"])

# %% [markdown]
# ## One vote

# %%
vote = board.decide(yes=["harbor", "mill", "delegate1..delegate4"], rule="budget")
print("passed:", vote["passed"], "critical:", vote["critical"])
for c in vote["conditions"]:
    print(f"  {c['text']:20} yes {c['sum']:>3} of {c['total']}, needs {c['needed']}")

# %% [markdown]
# ## Drafting: is the rule one weighted vote? Who ranks above whom?

# %%
s = board.simplify(rule="budget")
print("weighted:", s["weighted"], s["weighted_vote"]["notation"] if s["weighted_vote"] else "")
order = board.order(rule="budget")
print("order:", " > ".join("{" + ", ".join(c["members"][:3]) + ("…" if len(c["members"]) > 3 else "") + "}"
                           for c in order["classes"]))

# %% [markdown]
# ## Two drafts compared, and power as the quota moves

# %%
a, b = clout.game(3, [2, 1, 1]), clout.game(4, [2, 1, 1])
diff = a.compare(b)
print(diff["verdict"], "on", diff["witness"]["coalition"], "- passes under", diff["witness"]["passes"])

sweep = board.sweep(rule="budget", start="50%", stop="90%", step="10%")
for p in sweep["points"]:
    harbor = p["members"][0]
    print(f"quota {p['quota']:>3}  passage {p['passage_probability']:.3f}  harbor banzhaf {harbor['banzhaf']:.3f}")

# %% [markdown]
# ## Errors point at the text

# %%
try:
    clout.parse("member harbor seats=9\nrule r = seats >= 2/3 and harbour\n", name="draft.clout")
except clout.RuleError as e:
    print(f"line {e.line}, column {e.column}: {e.message} ({e.hint})")

# %% [markdown]
# ## Weights for a target distribution of power, and a device image

# %%
found = clout.fit({"upper": 0.4, "lower": 0.35, "delta": 0.25}, seconds=0.5)
print(found["weighted_vote"]["notation"], "max deviation", round(found["max_deviation"], 4))
image = board.image(rule="budget")
print(len(image), "bytes of rule image for the C ABI")
