"""The package's one error base and one warning class.

Every error a user can fix by changing an input derives from
:class:`PtaconstrainError` (itself a ``ValueError``, so ``except ValueError``
in user code keeps working).  The command line prints these as one line; any
other exception is a bug and is reported as one.

Soft assumptions (a guessed observing span, an assumed mass error, a sky
average used for want of a position) are :class:`PtaconstrainWarning`; Python
users see them through :mod:`warnings`, the command line prints each as one
``Note:`` line.
"""

__all__ = ["PtaconstrainError", "InputError", "PtaconstrainWarning"]


class PtaconstrainError(ValueError):
    """Base of every error caused by an input the user can correct.

    Parameters
    ----------
    message : str
        One line naming the field, the value and the fix.

    Examples
    --------
    >>> from ptaconstrain import Host, PtaconstrainError
    >>> try:
    ...     Host("Invented galaxy", "2e10 km", "100 Mpc")
    ... except PtaconstrainError as err:
    ...     print(err)
    mass: ...
    """


class InputError(PtaconstrainError):
    """A value (option, argument, file entry) cannot be used as given.

    The message names the field, the value and the fix, on one line.

    Parameters
    ----------
    message : str
        One line naming the field, the value and the fix.

    Examples
    --------
    >>> from ptaconstrain.errors import InputError, PtaconstrainError
    >>> issubclass(InputError, PtaconstrainError) and issubclass(InputError, ValueError)
    True
    """


class PtaconstrainWarning(UserWarning):
    """A soft assumption was made on the user's behalf; the message says which.

    Parameters
    ----------
    message : str
        One line saying which assumption was made.

    Examples
    --------
    >>> import warnings
    >>> from ptaconstrain import PtaconstrainWarning
    >>> with warnings.catch_warnings(record=True) as caught:
    ...     warnings.simplefilter("always")
    ...     warnings.warn("span: assumed 1/f_min = 15 yr", PtaconstrainWarning)
    >>> caught[0].category.__name__
    'PtaconstrainWarning'
    """
