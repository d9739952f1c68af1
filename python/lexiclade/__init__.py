"""Word clusters from raw text, cluster-path features, an averaged-perceptron
tagger and chunk scoring, from the lexiclade libraries.

The same results as the ``lexiclade`` command, computed by the same Rust code:

* ``Clusters.learn(lines)`` or ``Clusters.learn(files=...)`` learns Brown
  clusters; ``Clusters.load(dir)`` reads a directory ``lexiclade cluster``
  wrote; ``save(dir)`` writes one; ``path``, ``prefix``, ``words``,
  ``nearest`` and ``to_records`` answer questions about words and paths.
* ``Features(config, clusters=...)`` gives the feature strings of each token,
  as ``lexiclade featurize`` prints them.
* ``Tagger.train(...)``, ``Tagger.load(path)``, ``tag`` and ``save`` train,
  apply and store a tagger as ``lexiclade train`` and ``tag`` do.
* ``score(gold, pred)`` scores chunks as ``lexiclade eval --json`` does.

Long work (``learn``, ``train``) releases the interpreter and stops on Ctrl-C
with ``KeyboardInterrupt``. Bad input raises ``ValueError`` and files that
cannot be read or written ``OSError``, with the command's one-line messages.
"""

from ._native import Clusters, Features, Tagger, __version__, score

__all__ = ["Clusters", "Features", "Tagger", "score", "__version__"]
