"""snrgain.fields.quantity: a value in range passes as SI; out of range, the message names every bound (written only
then)."""

import numpy as np
import pytest
from pydantic import TypeAdapter, ValidationError

from snrgain.fields import quantity


@pytest.mark.parametrize(
    ("bounds", "value", "message"),
    [
        ({"gt": 0.05, "le": 30.0}, "-1 m", 'must be > 0.05 m and <= 30 m; got "-1 m"'),
        ({"ge": 1.0, "le": 3000.0}, "1e5 m", 'must be between 1 m and 3000 m; got "1e5 m"'),
        ({"gt": 0.0}, "0 m", 'must be > 0 m; got "0 m"'),
        ({"ge": 0.0, "lt": 5.0}, "5 m", 'must be >= 0 m and < 5 m; got "5 m"'),
    ],
)
def test_out_of_range_names_the_bounds(bounds, value, message):
    with pytest.raises(ValidationError, match=message.replace("(", r"\(")):
        TypeAdapter(quantity("length", **bounds)).validate_python(value)


def test_in_range_and_angles():
    assert TypeAdapter(quantity("length", gt=0.05, le=30.0)).validate_python("30 m") == 30.0
    angle = TypeAdapter(quantity("angle", ge=0.0, lt=np.pi / 2))
    assert angle.validate_python(30) == pytest.approx(np.radians(30.0))
    with pytest.raises(ValidationError, match="must be >= 0 deg and < 90 deg; got 90"):
        angle.validate_python(90)
